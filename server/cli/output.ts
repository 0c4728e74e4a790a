/** JSON and CSV rendering of engine results for the CLI. */
import { SWEEPABLE_FIELDS } from '../../shared/case/case-fields';
import type { RunResult } from '../../shared/engine/run-record';

/** JSON with typed arrays as plain arrays and non-finite numbers as strings ("Infinity", "NaN"). */
export function toJson(value: unknown): string {
  return JSON.stringify(
    value,
    (_key, v: unknown) => {
      if (typeof v === 'number' && !Number.isFinite(v)) return String(v);
      if (ArrayBuffer.isView(v)) return Array.from(v as unknown as ArrayLike<number>);
      return v;
    },
    2,
  );
}

/** SI unit of each leanest-drive cost, for the CSV header. */
const COST_UNIT = { acceleration: 'peak_acceleration_m_s2', stroke: 'stroke_m', force: 'force_N', power: 'power_W' } as const;

function cell(v: unknown): string {
  if (v === null || v === undefined) return '';
  // 15 significant digits hide binary noise such as 0.009000000000000001 and keep every digit the engine resolves.
  const s = typeof v === 'number' && Number.isFinite(v) ? String(Number(v.toPrecision(15))) : String(v);
  return /[",\n]/.test(s) ? `"${s.replace(/"/g, '""')}"` : s;
}

function rows(header: readonly string[], body: ReadonlyArray<readonly unknown[]>): string {
  return [header.join(','), ...body.map((r) => r.map(cell).join(','))].join('\n') + '\n';
}

/** A CSV table of a result: one row per sample, point or cell, with units in the header. */
export function toCsv(result: RunResult): string {
  switch (result.kind) {
    case 'motion': {
      const s = result.value.series;
      const chain = result.value.chain;
      const body: unknown[][] = [];
      if (chain) {
        // every link's absolute angle and rate, link 1 on the pivot
        const links = Array.from({ length: chain.links }, (_, k) => k);
        for (let i = 0; i < s.t.length; i++) {
          body.push([s.t[i], ...links.flatMap((k) => [chain.theta[k][i], chain.rate[k][i]]), s.pivotPosition[i], s.energy[i], s.pivotForce[i]]);
        }
        return rows(['t_s', ...links.flatMap((k) => [`theta${k + 1}_rad`, `rate${k + 1}_rad_s`]), 'pivot_m', 'energy_J', 'pivot_force_N'], body);
      }
      for (let i = 0; i < s.t.length; i++) body.push([s.t[i], s.theta[i], s.rate[i], s.pivotPosition[i], s.energy[i], s.pivotForce[i]]);
      return rows(['t_s', 'theta_rad', 'rate_rad_s', 'pivot_m', 'energy_J', 'pivot_force_N'], body);
    }
    case 'margins': {
      const f = result.value;
      // 2 multipliers for a single body, 2N for a chain of N links
      const count = Math.max(2, ...f.periodicMotions.map((m) => m.multipliers.length));
      const ks = Array.from({ length: count }, (_, k) => k);
      const body = f.periodicMotions.map((m) => [
        m.kind, m.meanAngle, m.angle, m.rate, ...ks.flatMap((k) => [m.multipliers[k]?.re, m.multipliers[k]?.im]), m.maxMultiplier, m.stable,
      ]);
      return rows(
        ['kind', 'mean_angle_rad', 'section_angle_rad', 'section_rate_rad_s', ...ks.flatMap((k) => [`mu${k + 1}_re`, `mu${k + 1}_im`]), 'max_abs_mu', 'stable'],
        body,
      );
    }
    case 'sweep': {
      const s = result.value;
      return rows(
        [s.field, 'outcome', 'max_abs_mu', 'slow_frequency_Hz', 'mean_angle_rad', 'max_deviation_rad', 'error'],
        s.points.map((p) => [p.value, p.outcome, p.maxMultiplier, p.slowFrequencyHz, p.meanAngle, p.maxDeviation, p.error]),
      );
    }
    case 'chart': {
      const c = result.value;
      const body: unknown[][] = [];
      for (let r = 0; r < c.yValues.length; r++) {
        for (let i = 0; i < c.xValues.length; i++) body.push([c.xValues[i], c.yValues[r], c.maxMultiplier[r * c.xValues.length + i]]);
      }
      return rows([c.grid.x.field, c.grid.y.field, 'max_abs_mu'], body);
    }
    case 'map':
    case 'basin': {
      const m = result.value;
      const body: unknown[][] = [];
      for (let r = 0; r < m.yValues.length; r++) {
        for (let i = 0; i < m.xValues.length; i++) {
          const c = m.cells[r * m.xValues.length + i];
          body.push([m.xValues[i], m.yValues[r], c.outcome, c.meanAngle, c.maxDeviation, c.slowFrequencyHz, c.error]);
        }
      }
      return rows([m.grid.x.field, m.grid.y.field, 'outcome', 'mean_angle_rad', 'max_deviation_rad', 'slow_frequency_Hz', 'error'], body);
    }
    case 'leanest': {
      // The optimum first, then every chart column's cheapest admissible drive (empty where none is).
      const l = result.value;
      const o = l.optimum;
      const c = l.columns;
      const finite = (v: number) => (Number.isFinite(v) ? v : null);
      const body: unknown[][] = [];
      if (o) body.push(['optimum', o.frequency, o.amplitude, o.lowerLimit, o.upperLimit, o.cost, o.binding.join(' ')]);
      for (let i = 0; i < c.frequency.length; i++) {
        body.push(['column', c.frequency[i], finite(c.amplitude[i]), finite(c.lower[i]), finite(c.upper[i]), finite(c.cost[i]), '']);
      }
      return rows(['row', 'frequency_Hz', 'amplitude_m', 'lower_limit_m', 'upper_limit_m', `cost_${COST_UNIT[l.cost]}`, 'binding'], body);
    }
    case 'holdprob': {
      // One row per sample: its drawn values (SI, headed by the field path and unit), margin, verdict and noise seed.
      const h = result.value;
      const fields = h.tolerances.map((t) => `${t.field}_${SWEEPABLE_FIELDS.find((f) => f.path === t.field)?.unit ?? 'SI'}`);
      const body = Array.from(h.margin, (m, i) => [
        i + 1, ...h.values.map((v) => v[i]), Number.isFinite(m) ? m : null, h.heldBySample[i] === 1, h.noiseSeeds[i] || null,
      ]);
      return rows(['sample', ...fields, 'margin_percent', 'held', 'noise_seed'], body);
    }
  }
}
