import { formatCrosstalk } from '../../shared/input-crosstalk';
import { CROSSTALK_PAIR_VERDICT_LABELS, limitText, pairVerdict } from '../../shared/input-crosstalk-compare';
import type { JobCrosstalk } from '../services/input-crosstalk';
import { INK, contentWidth, heading, paragraph, table, type Doc } from './layout';

// The evidence report's input crosstalk: one sentence a customer can read, then a compact table
// of each pair, before and after, with the worse channel shown.

export function crosstalkSection(doc: Doc, c: JobCrosstalk | null): void {
  if (!c) return;
  heading(doc, 'Other inputs heard through the selected one');
  if (c.sentence) paragraph(doc, c.sentence, { font: 'Bold' });
  paragraph(
    doc,
    `One input was fed a 1 kHz test tone while the selector was set to each of the others in turn. Each figure says how far below the fed input's own level its tone was still heard (the worse of the two channels); higher is better. The limit is ${limitText(c)}.`,
    { size: 9, color: INK.muted },
  );
  doc.moveDown(0.3);
  const w = contentWidth(doc);
  const verdicts = c.rows.map((r) => pairVerdict(r));
  const rows = c.rows.map((r, i) => [`${r.driven}, heard with ${r.selected} selected`, formatCrosstalk(r.before), formatCrosstalk(r.after), CROSSTALK_PAIR_VERDICT_LABELS[verdicts[i]!]]);
  table(
    doc,
    [
      { header: 'Input fed the tone', width: w * 0.4 },
      { header: 'Before the repair', width: w * 0.2, figures: true, align: 'right' },
      { header: 'After the repair', width: w * 0.2, figures: true, align: 'right' },
      { header: 'Verdict', width: w * 0.2 },
    ],
    rows,
    {
      fontSize: 8.5,
      cellColor: (r, col) => {
        if (col !== 3) return undefined;
        const v = verdicts[r]!;
        return v === 'fixed' || v === 'meets' ? INK.after : v === 'short' || v === 'still_short' ? INK.before : undefined;
      },
    },
  );
}
