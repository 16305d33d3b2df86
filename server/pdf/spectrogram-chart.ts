import type { Spectrogram } from '../../shared/analysis-result';
import { levelColour, levelSpan } from '../../shared/level-colours';
import { spectrogramGrid } from '../../shared/spectrogram';
import type { Box } from './charts';
import { pdfText } from './fonts';
import { INK, type Doc } from './layout';
import { encodeRgbPng } from './png';

// Before and after spectrograms side by side on one colour scale, so the same colour is the same
// level in both, with one legend. Each picture goes in as a small PNG (one pixel per cell).

const PAD = { left: 30, top: 14, bottom: 14 };
const FREQ_TICKS = [20, 100, 1000, 10_000, 100_000];
const hzLabel = (f: number) => (f >= 1000 ? `${f / 1000}k` : String(f));

export interface SpectrogramSide {
  title: string;
  spectrogram: Spectrogram | null;
  channel: number;
  emptyText: string;
}

function picture(s: Spectrogram, channel: number, bottomDb: number, topDb: number): Buffer {
  const { columns, rows, db } = spectrogramGrid(s, channel);
  const rgb = new Uint8Array(columns * rows * 3);
  for (let f = 0; f < rows; f++) {
    for (let c = 0; c < columns; c++) {
      const [r, g, b] = levelColour((db[c * rows + f]! - bottomDb) / (topDb - bottomDb));
      const i = ((rows - 1 - f) * columns + c) * 3;
      rgb[i] = r;
      rgb[i + 1] = g;
      rgb[i + 2] = b;
    }
  }
  return encodeRgbPng(columns, rows, rgb);
}

function hasChannel(s: Spectrogram | null, channel: number): s is Spectrogram {
  return !!s && s.channels.some((c) => c.index === channel);
}

export function spectrogramPair(doc: Doc, box: Box, sides: [SpectrogramSide, SpectrogramSide]): void {
  let max = -Infinity;
  let floor = -Infinity;
  for (const side of sides) {
    if (!hasChannel(side.spectrogram, side.channel)) continue;
    floor = Math.max(floor, side.spectrogram.floorDb);
    for (const v of spectrogramGrid(side.spectrogram, side.channel).db) if (v > max) max = v;
  }
  const legendH = 22;
  const half = (box.w - 12) / 2;
  const span = Number.isFinite(max) ? levelSpan(max, floor) : null;
  sides.forEach((side, i) => {
    const x = box.x + i * (half + 12);
    doc.font('Bold').fontSize(8.5).fillColor(INK.text).text(pdfText(side.title), x, box.y, { width: half, lineBreak: false });
    const plot = { x: x + PAD.left, y: box.y + PAD.top, w: half - PAD.left, h: box.h - PAD.top - PAD.bottom - legendH };
    doc.rect(plot.x, plot.y, plot.w, plot.h).lineWidth(0.5).strokeColor(INK.rule).stroke();
    const s = side.spectrogram;
    if (!span || !hasChannel(s, side.channel)) {
      doc.font('Text').fontSize(8).fillColor(INK.muted).text(pdfText(side.emptyText), plot.x, plot.y + plot.h / 2 - 4, { width: plot.w, align: 'center' });
      return;
    }
    doc.image(picture(s, side.channel, span.bottomDb, span.topDb), plot.x, plot.y, { width: plot.w, height: plot.h });
    doc.font('Figures').fontSize(6).fillColor(INK.muted);
    const logSpan = Math.log(s.highHz / s.lowHz);
    for (const hz of FREQ_TICKS) {
      if (hz < s.lowHz || hz > s.highHz) continue;
      const y = plot.y + plot.h * (1 - Math.log(hz / s.lowHz) / logSpan);
      doc.text(hzLabel(hz), x, y - 3, { width: PAD.left - 4, align: 'right', lineBreak: false });
    }
    const total = s.columns * s.columnSeconds;
    doc.text('0 s', plot.x, plot.y + plot.h + 3, { lineBreak: false });
    doc.text(`${total.toFixed(total < 10 ? 2 : 1)} s`, plot.x + plot.w - 40, plot.y + plot.h + 3, { width: 40, align: 'right', lineBreak: false });
  });
  if (!span) return;
  // The legend: the ramp in 48 steps, labelled in dBFS at its ends and middle.
  const lx = box.x + PAD.left;
  const ly = box.y + box.h - legendH + 4;
  const lw = Math.min(220, half - PAD.left);
  const steps = 48;
  for (let k = 0; k < steps; k++) {
    const [r, g, b] = levelColour((k + 0.5) / steps);
    doc.rect(lx + (k * lw) / steps, ly, lw / steps + 0.3, 7).fill(`#${[r, g, b].map((v) => v.toString(16).padStart(2, '0')).join('')}`);
  }
  doc.font('Figures').fontSize(6).fillColor(INK.muted);
  const mid = (span.bottomDb + span.topDb) / 2;
  doc.text(`${span.bottomDb}`, lx, ly + 9, { lineBreak: false });
  doc.text(`${mid}`, lx + lw / 2 - 15, ly + 9, { width: 30, align: 'center', lineBreak: false });
  doc.text(`${span.topDb} dBFS`, lx + lw - 50, ly + 9, { width: 50, align: 'right', lineBreak: false });
  doc
    .font('Text')
    .fontSize(7)
    .text(pdfText('Time across, frequency up (log scale), the loudest level in each cell as colour, one scale for both.'), lx + lw + 12, ly, { width: box.w - lw - PAD.left - 12 });
}
