import { z } from 'zod';
import { inputListSchema } from './inputs';

export const UNIT_KINDS = [
  'integrated_amplifier',
  'receiver',
  'preamplifier',
  'power_amplifier',
  'phono_stage',
  'other',
] as const;
export const unitKindSchema = z.enum(UNIT_KINDS);
export type UnitKind = z.infer<typeof unitKindSchema>;
export const UNIT_KIND_LABELS: Record<UnitKind, string> = {
  integrated_amplifier: 'Integrated amplifier',
  receiver: 'Receiver',
  preamplifier: 'Preamplifier',
  power_amplifier: 'Power amplifier',
  phono_stage: 'Phono stage',
  other: 'Other',
};

const optionalText = (max: number) => z.string().trim().max(max).default('');

export const customerInputSchema = z.object({
  name: z.string().trim().min(1, 'Name is required').max(200),
  email: z.union([z.string().trim().toLowerCase().email(), z.literal('')]).default(''),
  phone: optionalText(60),
  address: optionalText(500),
  notes: optionalText(2000),
});
export type CustomerInput = z.infer<typeof customerInputSchema>;

export const customerSchema = customerInputSchema.extend({
  id: z.number().int(),
  createdAt: z.string(),
});
export type Customer = z.infer<typeof customerSchema>;

export const unitInputSchema = z.object({
  customerId: z.number().int().positive(),
  kind: unitKindSchema,
  maker: z.string().trim().min(1, 'Maker is required').max(120),
  model: z.string().trim().min(1, 'Model is required').max(120),
  serial: optionalText(120),
  notes: optionalText(2000),
  /** Source inputs on the selector; left out, the unit gets the usual ones for its kind. */
  inputs: inputListSchema.optional(),
});
export type UnitInput = z.infer<typeof unitInputSchema>;

export const unitSchema = unitInputSchema.extend({
  inputs: z.array(z.string()),
  id: z.number().int(),
  customerName: z.string(),
  createdAt: z.string(),
});
export type Unit = z.infer<typeof unitSchema>;
