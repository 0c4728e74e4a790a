import type { HoldProbResult } from '../../../../../shared/engine/holdprob';
import type { PlotCsv, PlotSpec } from '../../../ui/plot/plot';
import { STABILITY_COLORS } from '../map/stability-scale';

/**
 * The margin histogram of a hold-probability run: samples per margin bin (percent, the Margins tab's headline at the
 * sampled values), teal where the bin's margin is above zero, amber where the sampled rig no longer holds. CSV: the
 * bins with their edges and counts.
 */
export function holdProbabilityPlot(r: HoldProbResult): { data: PlotSpec[]; layout: PlotSpec; csv: PlotCsv } | null {
  const { edges, counts } = r.histogram;
  if (counts.length === 0) return null;
  const centre = Array.from(counts, (_, i) => (edges[i] + edges[i + 1]) / 2);
  const width = Array.from(counts, (_, i) => edges[i + 1] - edges[i]);
  const pick = (holds: boolean) => centre.map((_, i) => i).filter((i) => (centre[i] >= 0) === holds);
  const trace = (holds: boolean): PlotSpec => {
    const idx = pick(holds);
    return {
      type: 'bar', name: holds ? 'margin above zero' : 'below a limit',
      x: idx.map((i) => centre[i]), y: idx.map((i) => counts[i]), width: idx.map((i) => width[i]),
      marker: { color: holds ? STABILITY_COLORS.holdsEdge : STABILITY_COLORS.failsEdge, line: { color: STABILITY_COLORS.contour, width: 1 } },
      hovertemplate: 'margin %{x:.3g} %<br>%{y} samples<extra></extra>',
    };
  };
  const layout: PlotSpec = {
    xaxis: { title: { text: 'Margin at the sampled values (%)' }, zeroline: true },
    yaxis: { title: { text: 'Samples' }, rangemode: 'tozero' },
    bargap: 0.02,
    legend: { orientation: 'h', y: -0.25 },
    margin: { l: 64, r: 16, t: 24, b: 88 },
  };
  const csv: PlotCsv = {
    columns: [{ header: 'margin from', unit: '%' }, { header: 'margin to', unit: '%' }, { header: 'samples' }],
    rows: Array.from(counts, (c, i) => [edges[i], edges[i + 1], c]),
  };
  return { data: [trace(true), trace(false)], layout, csv };
}
