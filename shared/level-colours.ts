// The colour scale for level pictures (spectrograms), on screen and in the PDF. A ramp from dark
// blue through grey to yellow: lightness rises steadily from end to end, so the picture reads in
// greyscale print, and it avoids red–green contrasts, so it reads with the common colour-vision
// deficiencies. Stops are our own; colours between them are interpolated in sRGB.

const STOPS: readonly (readonly [number, number, number])[] = [
  [0x0b, 0x12, 0x33],
  [0x1b, 0x2a, 0x5e],
  [0x35, 0x40, 0x6e],
  [0x55, 0x58, 0x70],
  [0x74, 0x71, 0x6f],
  [0x95, 0x8b, 0x68],
  [0xba, 0xa5, 0x59],
  [0xdf, 0xc2, 0x3f],
  [0xfc, 0xe6, 0x3a],
];

/** RGB (0–255 each) for a position 0 (lowest level) … 1 (highest); outside values are clamped. */
export function levelColour(t: number): [number, number, number] {
  const x = Math.min(1, Math.max(0, Number.isFinite(t) ? t : 0)) * (STOPS.length - 1);
  const i = Math.min(STOPS.length - 2, Math.floor(x));
  const f = x - i;
  const a = STOPS[i]!;
  const b = STOPS[i + 1]!;
  return [0, 1, 2].map((k) => Math.round(a[k]! + (b[k]! - a[k]!) * f)) as [number, number, number];
}

/** Relative luminance (WCAG 2, sRGB) of a colour, 0 (black) … 1 (white). */
export function relativeLuminance([r, g, b]: readonly [number, number, number]): number {
  const lin = (c: number) => {
    const s = c / 255;
    return s <= 0.04045 ? s / 12.92 : ((s + 0.055) / 1.055) ** 2.4;
  };
  return 0.2126 * lin(r) + 0.7152 * lin(g) + 0.0722 * lin(b);
}

/** The dB span a picture shows: its loudest cell rounded up to 10 dB, and `rangeDb` below that. */
export function levelSpan(maxDb: number, floorDb: number, rangeDb = 120): { topDb: number; bottomDb: number } {
  const topDb = Math.ceil(maxDb / 10) * 10;
  return { topDb, bottomDb: Math.max(floorDb, topDb - rangeDb) };
}
