import type { DbOrTx } from '../db/client';
import { UNIT_KIND_LABELS, type UnitKind } from '../../shared/customers';
import { JOB_STATUS_LABELS, type JobStatus } from '../../shared/jobs';
import type { OverallVerdict, Verdict } from '../../shared/compare';
import type { AnalysisResult } from '../../shared/analysis-result';
import { formatSpecValue } from '../../shared/specs';
import { loadEvidence, type EvidenceCapture, type EvidenceData, type EvidenceStage } from '../services/evidence';
import { spectrumChart, waveformChart } from './charts';
import { crosstalkSection } from './crosstalk-section';
import { spectrogramPair } from './spectrogram-chart';
import { pdfText } from './fonts';
import { INK, MARGIN, contentWidth, ensureSpace, facts, footers, heading, newDoc, noteBox, paragraph, table, toBuffer, type Doc } from './layout';

const VERDICT_TEXT: Record<Verdict, string> = { better: 'Better', same: 'Same', worse: 'Worse', changed: 'Changed', missing: 'One side' };
const OVERALL_TEXT: Record<OverallVerdict, string> = { better: 'Improved', worse: 'Worse', same: 'No change', mixed: 'Mixed', missing: 'Incomplete' };
const verdictColor = (v: string) => (v === 'better' || v === 'Improved' || v === 'Better' ? INK.after : v === 'worse' || v === 'Worse' ? INK.before : undefined);

const day = (d: Date) => d.toISOString().slice(0, 10);
const stamp = (d: Date) => `${d.toISOString().slice(0, 10)} ${d.toISOString().slice(11, 16)} UTC`;

function fmt(value: number | null, unit: string, signed = false): string {
  if (value === null) return '—';
  const digits = unit === '%' ? (Math.abs(value) < 0.01 ? 4 : 3) : unit === '' ? 0 : 1;
  const text = value.toFixed(digits);
  // A change that rounds to zero prints as 0, not -0.0.
  const shown = Number(text) === 0 ? (0).toFixed(digits) : text;
  const sign = signed && Number(shown) > 0 ? '+' : '';
  return unit === '' ? `${sign}${shown}` : `${sign}${shown} ${unit}`;
}

function verdictText(r: { verdict: Verdict; before: number | null; after: number | null }): string {
  if (r.verdict !== 'missing') return VERDICT_TEXT[r.verdict];
  return r.before === null ? 'After only' : 'Before only';
}

function titleBlock(doc: Doc, d: EvidenceData) {
  const w = contentWidth(doc);
  doc.rect(0, 0, doc.page.width, 86).fill(INK.accent);
  doc.font('Bold').fontSize(20).fillColor('#ffffff').text('Repair evidence report', MARGIN, 26, { width: w - 160 });
  doc.font('Text').fontSize(10).fillColor('#d5ebe6').text(pdfText(`${d.shop.name}  ·  ${d.shop.address}`), MARGIN, 52, { width: w - 160 });
  doc.font('Figures').fontSize(14).fillColor('#ffffff').text(d.job.reference, MARGIN + w - 150, 26, { width: 150, align: 'right' });
  doc.font('Text').fontSize(9).fillColor('#d5ebe6').text(`made ${stamp(d.generatedAt)}`, MARGIN + w - 150, 48, { width: 150, align: 'right' });
  doc.y = 104;
  doc.fillColor(INK.text);
}

function summary(doc: Doc, d: EvidenceData) {
  facts(doc, [
    ['Unit', `${d.unit.maker} ${d.unit.model}`],
    ['Kind', UNIT_KIND_LABELS[d.unit.kind as UnitKind] ?? d.unit.kind],
    ['Serial', d.unit.serial],
    ['Customer', d.customer.name],
    ['Booked in', day(d.job.createdAt)],
    ['Stage', JOB_STATUS_LABELS[d.job.status as JobStatus] ?? d.job.status],
    ['Technician', d.technician ?? 'not assigned'],
    ['Accessories', d.job.accessories],
  ]);
  heading(doc, 'Reported and found');
  facts(doc, [['Reported fault', d.job.reportedFault]], 1);
  facts(doc, [['Fault found', d.job.faultFound || 'Not recorded yet']], 1);
  if (d.job.conditionNotes) facts(doc, [['Condition', d.job.conditionNotes]], 1);
}

function verdicts(doc: Doc, d: EvidenceData) {
  heading(doc, 'Before and after, stage by stage');
  if (d.stages.length === 0) {
    paragraph(doc, 'No measured captures are stored for this job yet, so there is nothing to compare.', { color: INK.muted });
    return;
  }
  const w = contentWidth(doc);
  const rows = d.stages.map((s) => [
    `${s.position}. ${s.name}`,
    s.before ? `${s.before.originalName}\n${stamp(s.before.createdAt)}` : '—',
    s.after ? `${s.after.originalName}\n${stamp(s.after.createdAt)}` : '—',
    OVERALL_TEXT[s.overall],
  ]);
  table(
    doc,
    [
      { header: 'Test point', width: w * 0.28 },
      { header: 'Before the repair', width: w * 0.29 },
      { header: 'After the repair', width: w * 0.29 },
      { header: 'Verdict', width: w * 0.14 },
    ],
    rows,
    { cellColor: (r, c) => (c === 3 ? verdictColor(rows[r]![3]!) : undefined) },
  );
}

function repairLog(doc: Doc, d: EvidenceData) {
  const w = contentWidth(doc);
  heading(doc, 'Parts replaced');
  if (d.parts.length === 0) paragraph(doc, 'No parts are recorded in the repair log.', { color: INK.muted });
  else {
    table(
      doc,
      [
        { header: 'Reference', width: w * 0.16, figures: true },
        { header: 'Part number', width: w * 0.22, figures: true },
        { header: 'Description', width: w * 0.52 },
        { header: 'Qty', width: w * 0.1, align: 'right', figures: true },
      ],
      d.parts.map((p) => [p.reference, p.partNumber, p.description, String(p.quantity)]),
    );
  }
  if (d.rails.length) {
    heading(doc, 'Supply rails', 11);
    const rows = d.rails.map((r) => [r.rail, `${r.nominalV} V ± ${r.tolerancePct} %`, `${r.measuredV} V`, `${r.deviationPct >= 0 ? '+' : ''}${r.deviationPct.toFixed(1)} %`, r.within ? 'Within' : 'Outside']);
    table(
      doc,
      [
        { header: 'Rail', width: w * 0.26 },
        { header: 'Nominal', width: w * 0.22, figures: true },
        { header: 'Measured', width: w * 0.18, figures: true },
        { header: 'Deviation', width: w * 0.18, figures: true, align: 'right' },
        { header: 'Result', width: w * 0.16 },
      ],
      rows,
      { cellColor: (r, c) => (c === 4 ? (d.rails[r]!.within ? INK.after : INK.before) : undefined) },
    );
  }
  if (d.bias.length) {
    heading(doc, 'Output-stage bias', 11);
    const rows = d.bias.map((b) => [b.channel, b.testPoint, `${b.targetMv} ± ${b.toleranceMv} mV`, b.finalMv === null ? '—' : `${b.finalMv} mV`, b.within === null ? 'Not read' : b.within ? 'Within' : 'Outside']);
    table(
      doc,
      [
        { header: 'Channel', width: w * 0.16 },
        { header: 'Test point', width: w * 0.26 },
        { header: 'Target', width: w * 0.22, figures: true },
        { header: 'Final', width: w * 0.18, figures: true },
        { header: 'Result', width: w * 0.18 },
      ],
      rows,
      { cellColor: (r, c) => (c === 4 && d.bias[r]!.within !== null ? (d.bias[r]!.within ? INK.after : INK.before) : undefined) },
    );
  }
}

function specSection(doc: Doc, d: EvidenceData) {
  heading(doc, 'Against the published figures');
  if (!d.spec.sheet || d.spec.rows.length === 0) {
    paragraph(doc, 'The shop has no published figures on file for this model, so no comparison is made.', { color: INK.muted });
    return;
  }
  paragraph(doc, `Published figures for the ${d.spec.sheet}, each with where it comes from, against the after-repair measurement furthest along the signal path.`, { size: 9, color: INK.muted });
  doc.moveDown(0.3);
  const w = contentWidth(doc);
  const rows = d.spec.rows.map((r) => [
    `${r.label}${r.condition ? `\n${r.condition}` : ''}`,
    r.publishedText,
    r.measured === null ? '—' : formatSpecValue(r.metric, Number(r.measured.toPrecision(4))),
    r.within === null ? 'Not judged' : r.within ? 'Meets' : 'Short',
    r.margin === null ? (r.note || '') : `${r.margin >= 0 ? '+' : ''}${r.margin.toFixed(2)} ${r.marginUnit}${r.note ? `; ${r.note}` : ''}`,
    `${r.source}${r.stage && r.measured !== null ? `\nmeasured at ${r.stage}` : ''}`,
  ]);
  table(
    doc,
    [
      { header: 'Figure', width: w * 0.22 },
      { header: 'Published', width: w * 0.13, figures: true },
      { header: 'Measured', width: w * 0.12, figures: true },
      { header: 'Result', width: w * 0.11 },
      { header: 'Margin', width: w * 0.2 },
      { header: 'Source', width: w * 0.22 },
    ],
    rows,
    { fontSize: 8.5, cellColor: (r, c) => (c === 3 && d.spec.rows[r]!.within !== null ? (d.spec.rows[r]!.within ? INK.after : INK.before) : undefined) },
  );
}

/** The channel worth drawing: the one with clicks, else the driven one, else the first. */
function chartChannel(c: EvidenceCapture | null): number {
  return c?.figures?.clicksChannel ?? c?.result?.drivenChannel ?? 0;
}
const channelOf = (r: AnalysisResult | null, index: number) => r?.channels.find((ch) => ch.index === index) ?? r?.channels[0] ?? null;

function stageDetail(doc: Doc, s: EvidenceStage) {
  ensureSpace(doc, 420);
  heading(doc, `Test point ${s.position}: ${s.name}`, 12);
  if (s.description) paragraph(doc, s.description, { size: 9, color: INK.muted });
  const notes = [s.before && `Before: ${s.before.notes}`, s.after && `After: ${s.after.notes}`].filter((n): n is string => !!n && !n.endsWith(': '));
  for (const n of notes) paragraph(doc, n, { size: 9 });
  doc.moveDown(0.3);
  const w = contentWidth(doc);
  const rows = s.rows.map((r) => [r.label, fmt(r.before, r.unit), fmt(r.after, r.unit), fmt(r.change, r.unit === 'dBFS' ? 'dB' : r.unit, true), verdictText(r), r.rule]);
  table(
    doc,
    [
      { header: 'Figure', width: w * 0.2 },
      { header: 'Before', width: w * 0.15, figures: true, align: 'right' },
      { header: 'After', width: w * 0.15, figures: true, align: 'right' },
      { header: 'Change', width: w * 0.14, figures: true, align: 'right' },
      { header: 'Verdict', width: w * 0.11 },
      { header: 'Rule', width: w * 0.25 },
    ],
    rows,
    { fontSize: 8.5, cellColor: (r, c) => (c === 4 ? verdictColor(s.rows[r]!.verdict) : undefined) },
  );
  const channel = chartChannel(s.before ?? s.after);
  const series = [
    { label: 'before', color: INK.before, cap: s.before },
    { label: 'after', color: INK.after, cap: s.after },
  ]
    .map((x) => ({ ...x, ch: channelOf(x.cap?.result ?? null, channel) }))
    .filter((x) => x.ch);
  ensureSpace(doc, 290);
  const top = doc.y;
  spectrumChart(
    doc,
    { x: MARGIN, y: top, w, h: 170 },
    `Spectrum of channel ${channel + 1} (${channel === 0 ? 'left' : channel === 1 ? 'right' : 'other'}): level in dBFS against frequency in Hz`,
    series.map((x) => ({ label: x.label, color: x.color, frequencyHz: x.ch!.spectrum.frequencyHz, levelDbfs: x.ch!.spectrum.levelDbfs })),
  );
  const half = (w - 12) / 2;
  waveformChart(doc, { x: MARGIN, y: top + 180, w: half, h: 96 }, 'Waveform before', channelOf(s.before?.result ?? null, channel)?.waveform ?? null, INK.before, s.before ? undefined : 'No capture before the repair');
  waveformChart(doc, { x: MARGIN + half + 12, y: top + 180, w: half, h: 96 }, 'Waveform after', channelOf(s.after?.result ?? null, channel)?.waveform ?? null, INK.after, s.after ? undefined : 'No capture after the repair yet');
  doc.y = top + 286;
  doc.x = MARGIN;
  if (s.faultFirstShows) {
    ensureSpace(doc, 200);
    const y = doc.y;
    const side = (cap: EvidenceCapture | null, title: string, missing: string) => ({
      title: `${title}, channel ${channel + 1}`,
      spectrogram: cap?.result?.spectrogram ?? null,
      channel,
      emptyText: cap ? 'No spectrogram stored (measured by an older engine)' : missing,
    });
    spectrogramPair(doc, { x: MARGIN, y, w, h: 190 }, [
      side(s.before, 'Spectrogram before', 'No capture before the repair'),
      side(s.after, 'Spectrogram after', 'No capture after the repair yet'),
    ]);
    doc.y = y + 198;
    doc.x = MARGIN;
  }
}

function closing(doc: Doc, d: EvidenceData) {
  heading(doc, 'How the figures were measured');
  paragraph(
    doc,
    'Levels are in dBFS as defined in AES17: a full-scale sine reads 0 dBFS. THD is the RMS sum of harmonics 2 to 10 over the fundamental. THD+N is everything except the fundamental and DC in the 20 Hz to 20 kHz band, relative to the total. A-weighted noise uses the IEC 61672-1 curve. Channel separation is the test tone in the driven channel minus the same tone leaking into the other channel. Input crosstalk is the level of a tone fed into one input minus the same tone heard with another input selected, both read in a narrow band at the tone (IEC 60268-3 form); where the leak is lost in the noise the report says "better than" the level the noise allows. Clicks are impulsive events that stand clear of the capture\'s own noise. Verdicts follow the rule shown beside each figure; a small change inside the stated band counts as the same, because repeat captures of an unchanged unit differ by about that much.',
    { size: 9 },
  );
  ensureSpace(doc, 110);
  heading(doc, 'Sign-off');
  if (d.signOff) {
    paragraph(doc, `Tested after repair and signed off by ${d.signOff.by ?? d.technician ?? 'the workshop'} on ${day(d.signOff.at)}.`);
  } else {
    paragraph(doc, 'Not signed off yet: the job has not reached "Ready". This report is provisional and may change.', { color: INK.before });
  }
  doc.moveDown(1.6);
  const y = doc.y;
  doc.moveTo(MARGIN, y).lineTo(MARGIN + 200, y).lineWidth(0.5).strokeColor(INK.text).stroke();
  doc.moveTo(MARGIN + 260, y).lineTo(MARGIN + 400, y).stroke();
  doc.font('Text').fontSize(8).fillColor(INK.muted).text('Technician', MARGIN, y + 3).text('Date', MARGIN + 260, y + 3);
  doc.y = y + 20;
  doc.x = MARGIN;
  noteBox(
    doc,
    'Safety',
    [
      'The unit runs from mains voltage, and its power-supply capacitors can hold a dangerous charge long after it is switched off and unplugged. Do not open the case.',
      'Switch on with the volume at minimum. Connect or disconnect speakers only with the unit off, and never short the speaker terminals.',
      'Further servicing, including bias and supply adjustments, belongs to a qualified person working to the maker\'s service manual and local electrical codes.',
    ],
    'caution',
  );
  noteBox(doc, 'What this report does and does not say', [
    'It records measurements taken on the bench on the dates shown, under the conditions stated. It describes the unit then; it is not a promise about how the unit will behave later, beyond the workshop\'s stated repair warranty.',
    'Unless a calibration is stated, levels are relative to the measuring interface\'s full scale, and figures from different interfaces are not directly comparable.',
    'Published figures are the maker\'s own, from the source listed. An older unit may no longer meet them, and the workshop does not undertake that it will.',
    'The workshop\'s liability is limited as set out in its terms of business. Nothing in this report limits rights the customer has by law.',
  ]);
}

export function drawEvidence(d: EvidenceData): Promise<Buffer> {
  const doc = newDoc({ title: `Repair evidence ${d.job.reference}`, author: d.shop.name, subject: `${d.unit.maker} ${d.unit.model}` });
  titleBlock(doc, d);
  summary(doc, d);
  verdicts(doc, d);
  crosstalkSection(doc, d.crosstalk);
  repairLog(doc, d);
  specSection(doc, d);
  for (const s of d.stages) stageDetail(doc, s);
  closing(doc, d);
  footers(doc, `${d.shop.name} · repair evidence ${d.job.reference} · ${d.unit.maker} ${d.unit.model}`);
  return toBuffer(doc);
}

export async function renderEvidencePdf(db: DbOrTx, shopId: number, jobId: number): Promise<Buffer> {
  return drawEvidence(await loadEvidence(db, shopId, jobId));
}
