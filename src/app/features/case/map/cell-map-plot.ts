import { OUTCOME_COLOURS, OUTCOME_WORDS, outcomeWords } from '../../../../../shared/case/display';
import type { MapCell } from '../../../../../shared/engine/sweep';
import type { PlotCsv, PlotSpec } from '../../../ui/plot/plot';
import { logTicks } from './stability-chart-plot';

const OUTCOMES = Object.keys(OUTCOME_WORDS);
/** Cells where the case is invalid get their own band after the outcomes, so they never read as "not computed". */
const NO_CASE = OUTCOMES.length;
const NO_CASE_COLOUR = '#9e9e9e';

/** One axis of a map as shown: the field's label and display unit, SI to display, and its spacing. */
export interface MapAxisView {
  readonly label: string;
  readonly unit: string;
  readonly toShown: (si: number) => number;
  readonly log: boolean;
}

/** A map's cells, row-major (index = row * x count + column); null where a running map has not computed it yet. */
export interface MapCells {
  readonly xValues: ArrayLike<number>;
  readonly yValues: ArrayLike<number>;
  readonly cells: ReadonlyArray<MapCell | null | undefined>;
}

/** One legend entry with how many of the map's computed cells have that outcome. */
export interface OutcomeCount {
  readonly key: string;
  readonly label: string;
  readonly color: string;
  readonly count: number;
  /** Share of the computed cells, 0..1. */
  readonly share: number;
}

/** The legend of a map: one entry per outcome, in the colours of every outcome plot. */
export const OUTCOME_LEGEND = OUTCOMES.map((o) => ({ key: o, label: OUTCOME_WORDS[o], color: OUTCOME_COLOURS[o] }));

/** A stepped colour scale, one band per outcome and one for "no valid case" (z from -0.5 to n + 0.5). */
export function outcomeColorscale(): Array<[number, string]> {
  const colours = [...OUTCOMES.map((o) => OUTCOME_COLOURS[o]), NO_CASE_COLOUR];
  const n = colours.length;
  return colours.flatMap((c, i): Array<[number, string]> => [[i / n, c], [(i + 1) / n, c]]);
}

/**
 * How many computed cells have each outcome (every outcome listed, also at 0), then "no valid case" when any cell
 * had an invalid case. Cells not computed yet (null) are not counted.
 */
export function outcomeCounts(cells: ReadonlyArray<MapCell | null | undefined>): OutcomeCount[] {
  const counts = new Map<string, number>(OUTCOMES.map((o) => [o, 0]));
  let invalid = 0;
  let computed = 0;
  for (const cell of cells) {
    if (!cell) continue;
    computed++;
    if (cell.outcome && counts.has(cell.outcome)) counts.set(cell.outcome, (counts.get(cell.outcome) ?? 0) + 1);
    else invalid++;
  }
  const share = (n: number) => (computed > 0 ? n / computed : 0);
  const rows: OutcomeCount[] = OUTCOME_LEGEND.map((o) => ({ ...o, count: counts.get(o.key) ?? 0, share: share(counts.get(o.key) ?? 0) }));
  if (invalid > 0) rows.push({ key: 'invalid', label: outcomeWords(null), color: NO_CASE_COLOUR, count: invalid, share: share(invalid) });
  return rows;
}

function axisLayout(axis: MapAxisView, shown: number[]): PlotSpec {
  const title = { text: axis.unit ? `${axis.label} (${axis.unit})` : axis.label };
  if (!axis.log) return { title };
  const { tickvals, ticktext } = logTicks(shown[0], shown[shown.length - 1]);
  return { title, type: 'log', tickvals, ticktext };
}

const withUnit = (axis: MapAxisView, format: string) => (axis.unit ? `${format} ${axis.unit}` : format);

/**
 * An outcome map or basin map as a Plotly heatmap in display units: one colour per outcome, grey where the case is
 * invalid, blank where a running map has no result yet; hover names both fields with their units and the outcome in
 * words. The CSV lists every computed cell.
 */
export function cellMapPlot(map: MapCells, x: MapAxisView, y: MapAxisView): { data: PlotSpec[]; layout: PlotSpec; csv: PlotCsv } {
  const xs = Array.from(map.xValues, (v) => x.toShown(v));
  const ys = Array.from(map.yValues, (v) => y.toShown(v));
  const nx = xs.length;
  const z: Array<Array<number | null>> = [];
  const text: string[][] = [];
  const rows: Array<Array<number | string>> = [];
  for (let j = 0; j < ys.length; j++) {
    const zRow: Array<number | null> = [];
    const words: string[] = [];
    for (let i = 0; i < nx; i++) {
      const cell = map.cells[j * nx + i];
      if (!cell) {
        zRow.push(null);
        words.push('not computed yet');
        continue;
      }
      zRow.push(cell.outcome ? OUTCOMES.indexOf(cell.outcome) : NO_CASE);
      words.push(outcomeWords(cell.outcome));
      rows.push([xs[i], ys[j], outcomeWords(cell.outcome)]);
    }
    z.push(zRow);
    text.push(words);
  }
  const data: PlotSpec[] = [
    {
      type: 'heatmap', x: xs, y: ys, z, text, zmin: -0.5, zmax: NO_CASE + 0.5, colorscale: outcomeColorscale(), showscale: false,
      hoverongaps: false,
      hovertemplate: `${x.label} ${withUnit(x, '%{x:.4~g}')}<br>${y.label} ${withUnit(y, '%{y:.4~g}')}<br>%{text}<extra></extra>`,
    },
  ];
  const layout: PlotSpec = { xaxis: axisLayout(x, xs), yaxis: axisLayout(y, ys) };
  const csv: PlotCsv = {
    columns: [{ header: x.label, unit: x.unit || undefined }, { header: y.label, unit: y.unit || undefined }, { header: 'outcome' }],
    rows,
  };
  return { data, layout, csv };
}
