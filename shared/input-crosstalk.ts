import type { CapturePhase } from './captures';
import type { ToneLevels } from './capture-figures';
import { inputKey } from './inputs';

// Input crosstalk: one input is driven with a test tone and the selector is stepped through the
// others; how far below the driven input's own level the tone is still heard with another input
// selected. IEC 60268-3 form of the figure: 20·lg(U_driven / U_undriven), here taken as the
// difference of two narrow-band tone levels in dBFS (reference capture minus leak capture), per
// output channel, with the same probe and gain for both.
// The reference is the driven input's own capture (that input selected), or a level the
// technician enters. A leaked tone that does not stand NOISE_MARGIN_DB above the noise under its
// lobe, or that was found at another frequency than the reference tone (the search took a noise
// peak or a spur instead), cannot be read. Such a tone is below both what the lobe holds and the
// noise plus the margin (a tone above that would have been found and read), so the cell says
// "better than" the reference minus the higher of the two: a bound the true figure lies beyond.

/** Below this the lobe holds about as much noise as tone (power ratio 4), as for channel separation. */
export const NOISE_MARGIN_DB = 6;
/** A leak found further than this from the reference tone was not the tone (relative). */
const FREQUENCY_TOLERANCE = 0.005;
/**
 * Used when the spec sheet has no input crosstalk figure: the historic minimum for hi-fi
 * amplifiers, crosstalk ≥ 40 dB at 1 kHz (DIN 45500 part 6, as the trade quotes it).
 */
export const TRADE_MINIMUM_CROSSTALK_DB = 40;

/**
 * Input crosstalk is read at 1 kHz: a capture tagged with a driven input has its tone searched
 * within ±5 % of this (the engine's toneHz rule), which takes the AES17 997 Hz tone and a 1 kHz
 * one, and keeps a louder hum or spur elsewhere from being taken for the leaked tone.
 */
export const CROSSTALK_TONE_HZ = 1000;

/** What the matrix needs from a capture. */
export interface CrosstalkCapture {
  id: number;
  phase: CapturePhase;
  selectedInput: string | null;
  drivenInput: string | null;
  createdAt: string;
  tone: ToneLevels | null | undefined;
}

export interface CrosstalkReference {
  driven: string;
  channel: number;
  levelDbfs: number;
  frequencyHz: number | null;
  /** The capture with the driven input selected, or null for a level the technician entered. */
  captureId: number | null;
}

export interface CrosstalkCell {
  driven: string;
  selected: string;
  channel: number;
  /** dB below the reference; with noiseLimited, the true figure is at least this. */
  db: number | null;
  noiseLimited: boolean;
  captureId: number;
}

export interface CrosstalkMatrix {
  phase: CapturePhase;
  /** Inputs that were driven, in the unit's order. */
  driven: string[];
  /** Inputs that were selected while another was driven, in the unit's order. */
  selected: string[];
  channels: number[];
  references: CrosstalkReference[];
  cells: CrosstalkCell[];
  /** Driven inputs with leak captures but neither a reference capture nor an entered level. */
  missingReference: string[];
}

/**
 * True for a capture of another input heard through the selected one: it belongs to the crosstalk
 * matrix, not to the stage's ordinary before/after figures.
 */
export function isCrosstalkCapture(c: Pick<CrosstalkCapture, 'selectedInput' | 'drivenInput'>): boolean {
  return c.selectedInput !== null && c.drivenInput !== null && inputKey(c.selectedInput) !== inputKey(c.drivenInput);
}

const isLeak = (c: CrosstalkCapture) => c.selectedInput !== null && c.drivenInput !== null && inputKey(c.selectedInput) !== inputKey(c.drivenInput);
const isOwn = (c: CrosstalkCapture) => c.selectedInput !== null && c.drivenInput !== null && inputKey(c.selectedInput) === inputKey(c.drivenInput);

/** Latest capture per key (createdAt, then id, breaks ties). */
function latestBy(captures: CrosstalkCapture[], key: (c: CrosstalkCapture) => string): Map<string, CrosstalkCapture> {
  const out = new Map<string, CrosstalkCapture>();
  for (const c of captures) {
    const k = key(c);
    const seen = out.get(k);
    if (!seen || c.createdAt > seen.createdAt || (c.createdAt === seen.createdAt && c.id > seen.id)) out.set(k, c);
  }
  return out;
}

function ordered(names: string[], order: readonly string[]): string[] {
  const rank = (n: string) => {
    const i = order.findIndex((o) => inputKey(o) === inputKey(n));
    return i < 0 ? order.length : i;
  };
  return [...names].sort((a, b) => rank(a) - rank(b) || a.localeCompare(b));
}

/**
 * The driven × selected matrix of one phase from tagged, measured captures. Captures without a
 * tone level (not measured, or not a tone) are left out.
 */
export function buildCrosstalkMatrix(options: {
  captures: CrosstalkCapture[];
  phase: CapturePhase;
  /** The unit's inputs, for the order of rows and columns. */
  inputOrder?: readonly string[];
  /** Driven input → its level in dBFS at the same test point, when it has no capture of its own. */
  enteredReferenceDbfs?: Readonly<Record<string, number>>;
}): CrosstalkMatrix {
  const { phase, inputOrder = [], enteredReferenceDbfs = {} } = options;
  const usable = options.captures.filter((c) => c.phase === phase && c.tone && c.tone.channels.length > 0);
  const own = latestBy(usable.filter(isOwn), (c) => inputKey(c.drivenInput!));
  const leaks = latestBy(usable.filter(isLeak), (c) => `${inputKey(c.drivenInput!)}\u0000${inputKey(c.selectedInput!)}`);

  const channelSet = new Set<number>();
  for (const c of leaks.values()) for (const ch of c.tone!.channels) channelSet.add(ch.channel);
  const channels = [...channelSet].sort((a, b) => a - b);

  const references: CrosstalkReference[] = [];
  const missing = new Set<string>();
  const refFor = (driven: string, channel: number): CrosstalkReference | null => {
    const found = references.find((r) => inputKey(r.driven) === inputKey(driven) && r.channel === channel);
    if (found) return found;
    const capture = own.get(inputKey(driven));
    let ref: CrosstalkReference | null = null;
    const level = capture?.tone?.channels.find((ch) => ch.channel === channel)?.levelDbfs ?? null;
    if (capture && level !== null) {
      ref = { driven, channel, levelDbfs: level, frequencyHz: capture.tone!.frequencyHz, captureId: capture.id };
    } else {
      const enteredKey = Object.keys(enteredReferenceDbfs).find((k) => inputKey(k) === inputKey(driven));
      const entered = enteredKey === undefined ? undefined : enteredReferenceDbfs[enteredKey];
      if (entered !== undefined && Number.isFinite(entered)) ref = { driven, channel, levelDbfs: entered, frequencyHz: null, captureId: null };
    }
    if (ref) references.push(ref);
    else missing.add(driven);
    return ref;
  };

  // Names in the unit's spelling when it lists them, so rows and columns match its inputs.
  const canon = (name: string) => inputOrder.find((o) => inputKey(o) === inputKey(name)) ?? name;
  const cells: CrosstalkCell[] = [];
  for (const leak of leaks.values()) {
    const driven = canon(leak.drivenInput!);
    const selected = canon(leak.selectedInput!);
    for (const ch of leak.tone!.channels) {
      const ref = refFor(driven, ch.channel);
      if (!ref || ch.levelDbfs === null) {
        // Nothing at all in the lobe (digital silence): the leak is below anything this capture can show.
        cells.push({ driven, selected, channel: ch.channel, db: null, noiseLimited: ch.levelDbfs === null, captureId: leak.id });
        continue;
      }
      const offTone = ref.frequencyHz !== null && Math.abs(leak.tone!.frequencyHz - ref.frequencyHz) > FREQUENCY_TOLERANCE * ref.frequencyHz;
      const buried = ch.noiseDbfs !== null && ch.levelDbfs - ch.noiseDbfs < NOISE_MARGIN_DB;
      const readable = ch.noiseDbfs === null ? ch.levelDbfs : Math.max(ch.levelDbfs, ch.noiseDbfs + NOISE_MARGIN_DB);
      const noiseLimited = offTone || buried;
      cells.push({ driven, selected, channel: ch.channel, db: ref.levelDbfs - (noiseLimited ? readable : ch.levelDbfs), noiseLimited, captureId: leak.id });
    }
  }
  const drivenNames = [...new Map(cells.map((c) => [inputKey(c.driven), c.driven])).values()];
  const selectedNames = [...new Map(cells.map((c) => [inputKey(c.selected), c.selected])).values()];
  return {
    phase,
    driven: ordered(drivenNames, inputOrder),
    selected: ordered(selectedNames, inputOrder),
    channels,
    references,
    cells,
    missingReference: ordered([...missing], inputOrder),
  };
}

export function cellAt(m: CrosstalkMatrix, driven: string, selected: string, channel: number): CrosstalkCell | null {
  return m.cells.find((c) => inputKey(c.driven) === inputKey(driven) && inputKey(c.selected) === inputKey(selected) && c.channel === channel) ?? null;
}

/** The worse channel of one driven/selected pair: the smallest figure (the loudest leak). */
export function worstCell(m: CrosstalkMatrix, driven: string, selected: string): CrosstalkCell | null {
  let worst: CrosstalkCell | null = null;
  for (const ch of m.channels) {
    const c = cellAt(m, driven, selected, ch);
    if (!c || c.db === null) continue;
    // A measured figure is worse than a bound of the same size: it is known to be that bad.
    if (!worst || c.db < (worst.db as number) || (c.db === worst.db && !c.noiseLimited)) worst = c;
  }
  return worst;
}

/** "71.2 dB" or "better than 95.0 dB". */
export function formatCrosstalk(cell: Pick<CrosstalkCell, 'db' | 'noiseLimited'> | null): string {
  if (!cell || cell.db === null) return cell?.noiseLimited ? 'nothing heard' : '—';
  return `${cell.noiseLimited ? 'better than ' : ''}${cell.db.toFixed(1)} dB`;
}

export type CrosstalkVerdict = 'meets' | 'short' | 'unknown';
export const CROSSTALK_VERDICT_LABELS: Record<CrosstalkVerdict, string> = {
  meets: 'Meets the limit',
  short: 'Short of the limit',
  unknown: 'Cannot tell (lost in the noise)',
};

/** A cell against the limit: a bound at or past the limit meets it; a bound short of it tells nothing. */
export function crosstalkVerdict(cell: Pick<CrosstalkCell, 'db' | 'noiseLimited'> | null, limitDb: number): CrosstalkVerdict | null {
  if (!cell) return null;
  if (cell.db === null) return cell.noiseLimited ? 'meets' : null;
  if (cell.db >= limitDb) return 'meets';
  return cell.noiseLimited ? 'unknown' : 'short';
}

/** The loudest leak anywhere in a matrix: the figure a stage is judged by. A bound counts only when nothing was read. */
export function worstOfMatrix(m: CrosstalkMatrix): CrosstalkCell | null {
  let worst: CrosstalkCell | null = null;
  for (const c of m.cells) {
    if (c.db === null) continue;
    if (!worst || (worst.noiseLimited && !c.noiseLimited) || (worst.noiseLimited === c.noiseLimited && c.db < (worst.db as number))) worst = c;
  }
  return worst;
}
