import { z } from 'zod';
import type { UnitKind } from './customers';

export interface TestPointTemplate {
  name: string;
  description: string;
}

/**
 * A starting signal path per kind of unit, source to output, applied when a job is booked in.
 * The technician renames, adds and reorders for the actual circuit (service manual references).
 */
export const SIGNAL_PATH_TEMPLATES: Record<UnitKind, readonly TestPointTemplate[]> = {
  integrated_amplifier: [
    { name: 'Input socket', description: 'Test tone in at the selected input, checked at the socket pins.' },
    { name: 'Input selector output', description: 'After the selector switch or IC; other inputs should be silent here.' },
    { name: 'Tone / volume stage output', description: 'After the tone controls and volume pot; volume at a fixed, noted setting.' },
    { name: 'Power-amp input', description: 'Input of the power stage, after any coupling capacitor.' },
    { name: 'Speaker terminals', description: 'Into a dummy load, never into speakers while testing.' },
  ],
  receiver: [
    { name: 'Input socket', description: 'Test tone in at a line input, checked at the socket pins.' },
    { name: 'Tuner output', description: 'Demodulated audio from the tuner section, before the selector.' },
    { name: 'Input selector output', description: 'After the selector; unselected sources should be silent here.' },
    { name: 'Tone / volume stage output', description: 'After the tone controls and volume pot; volume at a fixed, noted setting.' },
    { name: 'Power-amp input', description: 'Input of the power stage, after any coupling capacitor.' },
    { name: 'Speaker terminals', description: 'Into a dummy load, never into speakers while testing.' },
  ],
  preamplifier: [
    { name: 'Input socket', description: 'Test tone in at the selected input, checked at the socket pins.' },
    { name: 'Input selector output', description: 'After the selector; other inputs should be silent here.' },
    { name: 'Line stage output', description: 'After the line gain stage.' },
    { name: 'Tone / volume stage output', description: 'After the tone controls and volume pot.' },
    { name: 'Pre-out socket', description: 'Output socket, loaded as the power amplifier would load it.' },
  ],
  power_amplifier: [
    { name: 'Input socket', description: 'Test tone in, checked at the socket pins.' },
    { name: 'Input / driver stage output', description: 'After the input differential pair and driver.' },
    { name: 'Voltage amplifier stage output', description: 'Output of the voltage amplification stage, before the output devices.' },
    { name: 'Output stage (before relay)', description: 'Output devices, ahead of the protection relay.' },
    { name: 'Speaker terminals', description: 'Into a dummy load, never into speakers while testing.' },
  ],
  phono_stage: [
    { name: 'Input socket', description: 'Test tone in through an inverse-RIAA network at cartridge level.' },
    { name: 'First gain stage output', description: 'After the first gain stage, before equalisation.' },
    { name: 'RIAA network output', description: 'After the equalisation network.' },
    { name: 'Output socket', description: 'Line-level output, loaded as the amplifier input would load it.' },
  ],
  other: [
    { name: 'Input socket', description: 'Test tone in, checked at the socket pins.' },
    { name: 'Output socket', description: 'Output, suitably loaded. Add the stages between as you trace them.' },
  ],
};

const name = z.string().trim().min(1, 'Name the test point').max(120);
const description = z.string().trim().max(1000);

export const testPointCreateSchema = z.object({ name, description: description.default('') }).strict();
export type TestPointCreate = z.infer<typeof testPointCreateSchema>;

export const testPointUpdateSchema = z
  .object({ name, description })
  .partial()
  .strict()
  .refine((v) => Object.keys(v).length > 0, { message: 'Nothing to change' });
export type TestPointUpdate = z.infer<typeof testPointUpdateSchema>;

/** The whole new order: every test point of the job, each once. */
export const testPointOrderSchema = z
  .object({ ids: z.array(z.number().int().positive()).max(500) })
  .strict()
  .refine((v) => new Set(v.ids).size === v.ids.length, { message: 'A test point is listed twice', path: ['ids'] });
export type TestPointOrder = z.infer<typeof testPointOrderSchema>;

export const testPointSchema = z.object({
  id: z.number().int(),
  jobId: z.number().int(),
  /** 1-based place along the signal path. */
  position: z.number().int(),
  name: z.string(),
  description: z.string(),
});
export type TestPoint = z.infer<typeof testPointSchema>;
