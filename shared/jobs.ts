import { z } from 'zod';

/** The stages a repair job moves through, in order. */
export const JOB_STATUSES = [
  'booked_in',
  'diagnosis',
  'awaiting_approval',
  'awaiting_parts',
  'repair',
  'soak_test',
  'ready',
  'collected',
] as const;
export const jobStatusSchema = z.enum(JOB_STATUSES);
export type JobStatus = z.infer<typeof jobStatusSchema>;
export const JOB_STATUS_LABELS: Record<JobStatus, string> = {
  booked_in: 'Booked in',
  diagnosis: 'Diagnosis',
  awaiting_approval: 'Waiting for approval',
  awaiting_parts: 'Waiting for parts',
  repair: 'Repair',
  soak_test: 'Soak test',
  ready: 'Ready',
  collected: 'Collected',
};

export const jobSummarySchema = z.object({
  id: z.number().int(),
  reference: z.string(),
  status: jobStatusSchema,
  reportedFault: z.string(),
  unitId: z.number().int(),
  unitLabel: z.string(),
  customerId: z.number().int(),
  customerName: z.string(),
  assignedTechnicianId: z.number().int().nullable(),
  assignedTechnicianName: z.string().nullable(),
  createdAt: z.string(),
  updatedAt: z.string(),
});
export type JobSummary = z.infer<typeof jobSummarySchema>;
