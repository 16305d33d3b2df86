import { z } from 'zod';

// A calibration profile says how many volts RMS at the probe tip read as 0 dBFS (a full-scale
// sine) through a given sound card, gain setting and probe, so dBFS figures can be given in dBV
// and dBu. Probe attenuation is the divider ratio (10 for a 10:1 probe).

export const calibrationInputSchema = z.object({
  name: z.string().trim().min(1, 'Name is required').max(120),
  voltsAtFullScale: z
    .number({ error: 'Enter the volts RMS that read 0 dBFS' })
    .positive('Must be more than 0 V')
    .max(1000, 'At most 1000 V'),
  probeAttenuation: z.number().positive('Must be more than 0').max(1000, 'At most 1000:1').default(1),
  notes: z.string().trim().max(2000).default(''),
});
export type CalibrationInput = z.infer<typeof calibrationInputSchema>;
export type CalibrationInputDraft = z.input<typeof calibrationInputSchema>;

export const calibrationSchema = calibrationInputSchema.extend({
  id: z.number().int(),
  /** Level at the probe tip that reads 0 dBFS, 20·log10(V × attenuation). */
  dbvAtFullScale: z.number(),
  captureCount: z.number().int(),
  createdAt: z.string(),
});
export type Calibration = z.infer<typeof calibrationSchema>;

/** dBV at the probe tip for a full-scale reading. */
export const dbvAtFullScale = (voltsAtFullScale: number, probeAttenuation: number): number =>
  20 * Math.log10(voltsAtFullScale * probeAttenuation);
