import { createRequire } from 'node:module';
import { dirname, join } from 'node:path';
import { existsSync } from 'node:fs';

/**
 * The app's own fonts, from the @fontsource packages it already ships for the web app. pdfkit
 * reads WOFF (not WOFF2); we use the "latin" subset files, which cover ASCII, Latin-1, the
 * general punctuation block and a few symbols (€, ™, −). Text is passed through pdfText() so a
 * character outside that set prints as a readable stand-in instead of an empty box.
 */
const require = createRequire(import.meta.url);

function fontFile(pkg: string, file: string): string {
  const dir = join(dirname(require.resolve(`${pkg}/package.json`)), 'files');
  const path = join(dir, file);
  if (!existsSync(path)) throw new Error(`Font file missing: ${path} (reinstall ${pkg})`);
  return path;
}

export const FONTS = {
  text: fontFile('@fontsource/source-sans-3', 'source-sans-3-latin-400-normal.woff'),
  textBold: fontFile('@fontsource/source-sans-3', 'source-sans-3-latin-600-normal.woff'),
  textItalic: fontFile('@fontsource/source-sans-3', 'source-sans-3-latin-400-italic.woff'),
  figures: fontFile('@fontsource/jetbrains-mono', 'jetbrains-mono-latin-400-normal.woff'),
} as const;

/** Code points the latin subset files carry (fontsource's published unicode-range for "latin"). */
function inLatinSubset(cp: number): boolean {
  return (
    (cp >= 0x20 && cp <= 0x7e) ||
    (cp >= 0xa0 && cp <= 0xff) ||
    cp === 0x131 ||
    cp === 0x152 ||
    cp === 0x153 ||
    cp === 0x2c6 ||
    cp === 0x2da ||
    cp === 0x2dc ||
    (cp >= 0x2000 && cp <= 0x206f) ||
    cp === 0x20ac ||
    cp === 0x2122 ||
    cp === 0x2212 ||
    cp === 0x2215
  );
}

const STAND_INS: Record<string, string> = {
  '\u2126': 'ohm', // ohm sign
  '\u03a9': 'ohm', // Greek capital omega, often typed for ohms
  '\u03bc': '\u00b5', // Greek mu -> micro sign (which the subset has)
  '\u2265': '>=',
  '\u2264': '<=',
  '\u2248': '~',
  '\u2192': '->',
  '\u2190': '<-',
  '\u221a': 'sqrt',
  '\u221e': 'inf',
  '\u2713': 'yes',
  '\u2717': 'no',
};

/** Text safe for the embedded fonts: known symbols get stand-ins, other missing glyphs a "?". */
export function pdfText(s: string): string {
  let out = '';
  for (const ch of s.normalize('NFC')) {
    const cp = ch.codePointAt(0)!;
    if (ch === '\n' || ch === '\t') out += ch;
    else if (inLatinSubset(cp)) out += ch;
    else out += STAND_INS[ch] ?? '?';
  }
  return out;
}
