/**
 * Vector charts drawn straight into the PDF from the stored analysis results: a log-frequency
 * spectrum with before and after overlaid, and a min/max waveform envelope. Nothing is
 * rasterised, so the report stays sharp at any zoom and small on disk.
 */
import { INK, type Doc } from './layout';
import { pdfText } from './fonts';

export interface Box {
  x: number;
  y: number;
  w: number;
  h: number;
}

export interface SpectrumSeries {
  label: string;
  color: string;
  frequencyHz: number[];
  levelDbfs: number[];
}

const PAD = { left: 30, right: 6, top: 16, bottom: 16 };
const FREQ_TICKS = [20, 50, 100, 200, 500, 1000, 2000, 5000, 10_000, 20_000, 50_000, 100_000];
const hzLabel = (f: number) => (f >= 1000 ? `${f / 1000}k` : String(f));

function frame(doc: Doc, box: Box, title: string): Box {
  doc.font('Bold').fontSize(8.5).fillColor(INK.text).text(pdfText(title), box.x, box.y, { width: box.w, lineBreak: false });
  const plot = { x: box.x + PAD.left, y: box.y + PAD.top, w: box.w - PAD.left - PAD.right, h: box.h - PAD.top - PAD.bottom };
  doc.rect(plot.x, plot.y, plot.w, plot.h).lineWidth(0.5).strokeColor(INK.rule).stroke();
  return plot;
}

function gridLine(doc: Doc, x1: number, y1: number, x2: number, y2: number) {
  doc.moveTo(x1, y1).lineTo(x2, y2).lineWidth(0.3).strokeColor('#e0ddd5').stroke();
}

/** Level in dBFS over frequency on a log axis; each series is one line. */
export function spectrumChart(doc: Doc, box: Box, title: string, series: SpectrumSeries[]): void {
  const plot = frame(doc, box, title);
  const points = series.flatMap((s) => s.frequencyHz.map((f, i) => ({ f, l: s.levelDbfs[i]! })).filter((p) => p.f > 0 && Number.isFinite(p.l)));
  if (points.length === 0) {
    doc.font('Text').fontSize(8).fillColor(INK.muted).text('No spectrum stored', plot.x, plot.y + plot.h / 2 - 4, { width: plot.w, align: 'center' });
    return;
  }
  const fMin = 20;
  const fMax = Math.max(1000, ...points.map((p) => p.f));
  const top = Math.min(20, Math.max(0, Math.ceil(Math.max(...points.map((p) => p.l)) / 10) * 10));
  const lowest = Math.min(...points.map((p) => p.l));
  const floor = Math.max(-180, Math.min(top - 60, Math.floor(lowest / 20) * 20));
  const xOf = (f: number) => plot.x + (Math.log10(f / fMin) / Math.log10(fMax / fMin)) * plot.w;
  const yOf = (l: number) => plot.y + ((top - l) / (top - floor)) * plot.h;

  doc.font('Figures').fontSize(6).fillColor(INK.muted);
  for (const f of FREQ_TICKS.filter((t) => t >= fMin && t <= fMax)) {
    const x = xOf(f);
    gridLine(doc, x, plot.y, x, plot.y + plot.h);
    doc.text(hzLabel(f), x - 12, plot.y + plot.h + 3, { width: 24, align: 'center', lineBreak: false });
  }
  const step = top - floor > 100 ? 40 : 20;
  for (let l = top; l >= floor; l -= step) {
    const y = yOf(l);
    gridLine(doc, plot.x, y, plot.x + plot.w, y);
    doc.text(String(l), box.x, y - 3, { width: PAD.left - 4, align: 'right', lineBreak: false });
  }
  doc.text('dBFS', plot.x + 3, plot.y + 3, { lineBreak: false });

  doc.save();
  doc.rect(plot.x, plot.y, plot.w, plot.h).clip();
  for (const s of series) {
    let started = false;
    s.frequencyHz.forEach((f, i) => {
      const l = s.levelDbfs[i]!;
      if (!(f > 0) || !Number.isFinite(l)) return;
      const x = xOf(f);
      const y = yOf(Math.max(floor - 5, l));
      if (started) doc.lineTo(x, y);
      else doc.moveTo(x, y);
      started = true;
    });
    if (started) doc.lineWidth(0.8).strokeColor(s.color).stroke();
  }
  doc.restore();
  legend(doc, plot, series);
}

function legend(doc: Doc, plot: Box, series: { label: string; color: string }[]) {
  let x = plot.x + plot.w - 4;
  doc.font('Text').fontSize(7);
  for (const s of [...series].reverse()) {
    const w = doc.widthOfString(pdfText(s.label));
    x -= w;
    doc.fillColor(INK.text).text(pdfText(s.label), x, plot.y + 4, { lineBreak: false });
    x -= 14;
    doc.moveTo(x, plot.y + 8).lineTo(x + 10, plot.y + 8).lineWidth(1.6).strokeColor(s.color).stroke();
    x -= 8;
  }
}

export interface WaveformData {
  pointSeconds: number;
  min: number[];
  max: number[];
}

/** The capture's min/max envelope against full scale (±1), time along the bottom. */
export function waveformChart(doc: Doc, box: Box, title: string, wf: WaveformData | null, color: string, emptyText = 'No waveform stored'): void {
  const plot = frame(doc, box, title);
  if (!wf || wf.min.length === 0 || wf.min.length !== wf.max.length) {
    doc.font('Text').fontSize(8).fillColor(INK.muted).text(pdfText(emptyText), plot.x, plot.y + plot.h / 2 - 4, { width: plot.w, align: 'center' });
    return;
  }
  const n = wf.min.length;
  const duration = n * wf.pointSeconds;
  const xOf = (i: number) => plot.x + (i / Math.max(1, n - 1)) * plot.w;
  const yOf = (v: number) => plot.y + ((1 - Math.max(-1, Math.min(1, v))) / 2) * plot.h;
  gridLine(doc, plot.x, yOf(0), plot.x + plot.w, yOf(0));
  doc.font('Figures').fontSize(6).fillColor(INK.muted);
  doc.text('+FS', box.x, plot.y - 1, { width: PAD.left - 4, align: 'right', lineBreak: false });
  doc.text('0', box.x, yOf(0) - 3, { width: PAD.left - 4, align: 'right', lineBreak: false });
  doc.text('-FS', box.x, plot.y + plot.h - 5, { width: PAD.left - 4, align: 'right', lineBreak: false });
  doc.text('0 s', plot.x, plot.y + plot.h + 3, { lineBreak: false });
  doc.text(`${duration.toFixed(duration < 10 ? 2 : 1)} s`, plot.x + plot.w - 40, plot.y + plot.h + 3, { width: 40, align: 'right', lineBreak: false });

  doc.save();
  doc.rect(plot.x, plot.y, plot.w, plot.h).clip();
  doc.moveTo(xOf(0), yOf(wf.max[0]!));
  for (let i = 1; i < n; i++) doc.lineTo(xOf(i), yOf(wf.max[i]!));
  for (let i = n - 1; i >= 0; i--) doc.lineTo(xOf(i), yOf(wf.min[i]!));
  doc.closePath().fillOpacity(0.55).fill(color);
  doc.fillOpacity(1);
  doc.restore();
}
