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

const optionalText = (max: number) => z.string().trim().max(max).default('');

/** Intake at the counter: the customer follows from the unit, so the two cannot disagree. */
export const jobCreateSchema = z.object({
  unitId: z.number().int().positive(),
  reportedFault: z.string().trim().min(1, 'Describe the fault the customer reports').max(4000),
  accessories: optionalText(1000),
  conditionNotes: optionalText(2000),
  assignedTechnicianId: z.number().int().positive().nullable().default(null),
});
export type JobCreate = z.infer<typeof jobCreateSchema>;

/** The desk corrects what was written at intake. */
export const jobUpdateSchema = z
  .object({
    reportedFault: z.string().trim().min(1, 'Describe the fault the customer reports').max(4000),
    accessories: z.string().trim().max(1000),
    conditionNotes: z.string().trim().max(2000),
  })
  .partial()
  .strict()
  .refine((v) => Object.keys(v).length > 0, { message: 'Nothing to change' });
export type JobUpdate = z.infer<typeof jobUpdateSchema>;

export const jobFaultFoundSchema = z.object({ text: z.string().trim().max(4000) }).strict();
export type JobFaultFound = z.infer<typeof jobFaultFoundSchema>;

export const jobNoteSchema = z
  .object({
    text: z.string().trim().min(1, 'Write the note first').max(4000),
    /** Staff notes stay in the shop; a customer note is shown on the customer's page. */
    visibleToCustomer: z.boolean().default(false),
  })
  .strict();
export type JobNote = z.infer<typeof jobNoteSchema>;

export const jobAssignSchema = z.object({ technicianId: z.number().int().positive().nullable() }).strict();
export type JobAssign = z.infer<typeof jobAssignSchema>;

export const jobStatusChangeSchema = z
  .object({
    to: jobStatusSchema,
    /** The stage the user saw; when given and no longer true the move is refused (someone was faster). */
    from: jobStatusSchema.optional(),
    note: optionalText(2000),
  })
  .strict();
export type JobStatusChange = z.infer<typeof jobStatusChangeSchema>;

export const JOB_SORTS = ['updated', 'created', 'stage'] as const;
/** GET /api/jobs query: every value arrives as text. */
export const jobListQuerySchema = z
  .object({
    status: z.union([z.literal('open'), jobStatusSchema]).optional(),
    technicianId: z.union([z.literal('none'), z.coerce.number().int().positive()]).optional(),
    customerId: z.coerce.number().int().positive().optional(),
    q: z.string().trim().max(200).default(''),
    sort: z.enum(JOB_SORTS).default('updated'),
    dir: z.enum(['asc', 'desc']).default('desc'),
  })
  .strict();
export type JobListQuery = z.infer<typeof jobListQuerySchema>;

/** Event kinds written by this part of the product; others may add their own, so kind stays text. */
export const JOB_EVENT_KIND_LABELS: Record<string, string> = {
  status: 'Stage change',
  note: 'Staff note',
  customer_note: 'Note for the customer',
  fault_found: 'Fault found',
  assigned: 'Technician',
  edited: 'Intake details edited',
  repair_log: 'Repair log',
};
/** What a customer may see of the trail; status notes and staff notes stay in the shop. */
export const CUSTOMER_EVENT_KINDS: readonly string[] = ['status', 'customer_note'];

export const jobEventSchema = z.object({
  id: z.number().int(),
  kind: z.string(),
  fromStatus: jobStatusSchema.nullable(),
  toStatus: jobStatusSchema.nullable(),
  note: z.string(),
  at: z.string(),
  userName: z.string().nullable(),
});
export type JobEvent = z.infer<typeof jobEventSchema>;

export const jobDetailSchema = z.object({
  id: z.number().int(),
  reference: z.string(),
  status: jobStatusSchema,
  reportedFault: z.string(),
  accessories: z.string(),
  conditionNotes: z.string(),
  faultFound: z.string(),
  unit: z.object({
    id: z.number().int(),
    kind: z.string(),
    maker: z.string(),
    model: z.string(),
    serial: z.string(),
  }),
  customer: z.object({ id: z.number().int(), name: z.string(), email: z.string(), phone: z.string() }),
  assignedTechnician: z.object({ id: z.number().int(), name: z.string() }).nullable(),
  /** ISO 4217 code of the shop, for showing money. */
  currency: z.string(),
  events: z.array(jobEventSchema),
  createdAt: z.string(),
  updatedAt: z.string(),
});
export type JobDetail = z.infer<typeof jobDetailSchema>;

export const technicianSchema = z.object({ id: z.number().int(), name: z.string(), role: z.string() });
export type Technician = z.infer<typeof technicianSchema>;
