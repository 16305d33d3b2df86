import { z } from 'zod';
import type { UnitKind } from './customers';

// Source inputs of a unit: the positions of its input selector (phono, disc, tuner…). Captures
// name the input that was selected and the one that was driven, matched without regard to case
// and stored in the unit's own spelling.

/** Most inputs one unit or spec sheet may list. */
export const MAX_INPUTS = 16;

const inputNameSchema = z
  .string()
  .trim()
  .min(1, 'An input needs a name')
  .max(40, 'Input names are at most 40 characters');

/** A unit's or spec sheet's list of inputs: names unique without regard to case. */
export const inputListSchema = z
  .array(inputNameSchema)
  .max(MAX_INPUTS, `At most ${MAX_INPUTS} inputs`)
  .superRefine((list, ctx) => {
    const seen = new Set<string>();
    list.forEach((name, i) => {
      const key = inputKey(name);
      if (seen.has(key)) ctx.addIssue({ code: 'custom', path: [i], message: `"${name}" is listed twice` });
      seen.add(key);
    });
  });

/** What the selector offers on a typical unit of each kind, until the technician edits it. */
export const DEFAULT_INPUTS: Record<UnitKind, readonly string[]> = {
  integrated_amplifier: ['Phono', 'Disc', 'Tuner', 'Aux', 'Recorder'],
  receiver: ['Tuner', 'Phono', 'Disc', 'Aux', 'Recorder'],
  preamplifier: ['Phono', 'Disc', 'Tuner', 'Aux', 'Recorder'],
  power_amplifier: ['Main in'],
  phono_stage: ['MM', 'MC'],
  other: ['Input'],
};

export function defaultInputs(kind: UnitKind): string[] {
  return [...DEFAULT_INPUTS[kind]];
}

/** The key two spellings of one input share: case and repeated spaces do not matter. */
export function inputKey(name: string): string {
  return name.trim().replace(/\s+/g, ' ').toLowerCase();
}

/** The unit's spelling of a name, or null when the unit has no such input. */
export function matchInput(list: readonly string[], name: string): string | null {
  const key = inputKey(name);
  return list.find((n) => inputKey(n) === key) ?? null;
}

/** An input name on a capture: null = not said. */
export const captureInputSchema = z.string().trim().min(1, 'Leave the input empty or name it').max(40).nullable().default(null);

/** "Phono, Disc , tuner" typed in one field → ["Phono", "Disc", "tuner"]; empty pieces dropped. */
export function splitInputs(text: string): string[] {
  return text
    .split(',')
    .map((s) => s.trim().replace(/\s+/g, ' '))
    .filter((s) => s !== '');
}
