import type uPlot from 'uplot';
import { CHART } from './format';

export interface VerticalMark {
  x: number;
  label: string;
}

/**
 * A uPlot plugin drawing amber vertical lines with short labels at given x values (harmonic
 * markers on a spectrum, click events on a waveform), above the series. Pass a function when the
 * marks change between redraws (a live chart); it is read at each draw.
 */
export function verticalMarks(source: VerticalMark[] | (() => VerticalMark[])): uPlot.Plugin {
  const current = typeof source === 'function' ? source : () => source;
  return {
    hooks: {
      draw: (u: uPlot) => {
        const ctx = u.ctx;
        const { top, height, left, width } = u.bbox;
        const dpr = devicePixelRatio || 1;
        ctx.save();
        ctx.beginPath();
        ctx.rect(left, top, width, height);
        ctx.clip();
        ctx.strokeStyle = CHART.mark;
        ctx.fillStyle = CHART.markText;
        ctx.lineWidth = 1.5 * dpr;
        ctx.setLineDash([4 * dpr, 3 * dpr]);
        ctx.font = `${11 * dpr}px "JetBrains Mono", monospace`;
        ctx.textAlign = 'center';
        for (const m of current()) {
          const x = u.valToPos(m.x, 'x', true);
          if (!Number.isFinite(x) || x < left || x > left + width) continue;
          ctx.beginPath();
          ctx.moveTo(x, top + 14 * dpr);
          ctx.lineTo(x, top + height);
          ctx.stroke();
          if (m.label) ctx.fillText(m.label, x, top + 11 * dpr);
        }
        ctx.restore();
      },
    },
  };
}

export const axisStyle = (label?: string): uPlot.Axis => ({
  stroke: CHART.axis,
  font: CHART.font,
  labelFont: CHART.font,
  grid: { stroke: CHART.grid, width: 1 },
  ticks: { stroke: CHART.grid, width: 1 },
  ...(label ? { label } : {}),
});

/** Tick label for a log-frequency axis; uPlot passes null for the ticks it leaves unlabelled. */
export function hzTick(v: number | null): string {
  if (v === null) return '';
  if (v >= 1000) return `${Number((v / 1000).toPrecision(3))}k`;
  return `${Number(v.toPrecision(3))}`;
}
