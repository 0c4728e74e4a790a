/**
 * Quiverpoint command line: `npm run cli -- <command> ...` (tsx server/cli/main.ts).
 *
 * Commands print JSON on stdout (CSV with --csv), a progress bar on stderr, and exit 0 on success, 1 when a
 * recheck finds a mismatch, 2 on bad input (the field and the reason are printed), 3 when the engine fails.
 */
import { readFileSync } from 'node:fs';
import { availableParallelism } from 'node:os';
import { lastValueFrom, tap, type Observable } from 'rxjs';
import { DEMO_RIGS, getField, parseCase, templateCase, type CaseParams } from '../../shared/case';
import { createNodeEnginePool } from '../../shared/compute/node-pool';
import type { PoolEvent } from '../../shared/compute/worker-pool';
import { defaultChartGrid, type Grid2 } from '../../shared/engine/chart';
import {
  computeRun, makeRunRecord, parseRunRecord, recheckRun, type RunResult, type RunSettings,
} from '../../shared/engine/run-record';
import { defaultBasinGrid } from '../../shared/engine/sweep';
import { fitOutput, fitRequest, TraceInputError } from './fit-command';
import { countOption, flag, numberOption, parseArgs, stringOption, UsageError, type ParsedArgs } from './args';
import { toCsv, toJson } from './output';

const USAGE = `usage: npm run cli -- <command> [options]

  motion  <case.json>                      simulate the motion; outcome and series
  margins <case.json> [--tolerance 1e-6]   Floquet multipliers, periodic motions, drive limits, margin
  sweep   <case.json> --field drive.amplitude --from X --to Y --steps N [--log] [--tolerance T]
  chart   <case.json> [--freq-from F --freq-to F --amp-from A --amp-to A --n 200 (40 oblique) --linear]
  map     <case.json> --x-field F --x-from X --x-to X --y-field F --y-from Y --y-to Y [--n 9]
  basin   <case.json> [--n 11 --angle-from -3.14 --angle-to 3.14 --rate-from R --rate-to R]
  fit     <trace.csv> [--model viscous|viscous+quadratic|viscous+friction] [--angle-unit deg|rad] [--case case.json]
                                           free-swing fit: L, zeta, [c | mu], sensor zero, start state (SI)
  check   <run.json>                       rerun a stored run record and compare digest and summary
  template [--demo <id>]                   print a complete valid case (or a demo rig)

  common: --csv (CSV instead of JSON), --record (print only the run record), --workers N (default: cores)`;

class InputError extends Error {}

/** A mismatch found by `check` (exit 1). */
class MismatchExit extends Error {}

function readJson(path: string): unknown {
  let text: string;
  try {
    text = readFileSync(path, 'utf8');
  } catch (error: unknown) {
    throw new InputError(`${path}: cannot read file (${error instanceof Error ? error.message : String(error)})`);
  }
  try {
    return JSON.parse(text) as unknown;
  } catch (error: unknown) {
    throw new InputError(`${path}: not valid JSON (${error instanceof Error ? error.message : String(error)})`);
  }
}

function readCase(path: string | undefined): CaseParams {
  if (!path) throw new UsageError('a case file is required');
  const parsed = parseCase(readJson(path));
  if (!parsed.ok) {
    throw new InputError(`${path}: invalid case\n${parsed.issues.map((i) => `  ${i.field || '(case)'}: ${i.message}`).join('\n')}`);
  }
  return parsed.value;
}

/** Progress bar on stderr, redrawn in place. */
function progressBar(label: string): { update(fraction: number): void; done(): void } {
  let shown = -1;
  const draw = (fraction: number): void => {
    const pct = Math.floor(fraction * 100);
    if (pct === shown) return;
    shown = pct;
    const width = 30;
    const filled = Math.round(fraction * width);
    process.stderr.write(`\r${label} [${'#'.repeat(filled)}${' '.repeat(width - filled)}] ${String(pct).padStart(3)}%`);
  };
  return { update: draw, done: () => { draw(1); process.stderr.write('\n'); } };
}

function workerCount(args: ParsedArgs): number {
  return countOption(args, 'workers', availableParallelism(), 64);
}

/** Runs a pool job with a progress bar and returns its result; the pool is always disposed. */
async function onPool<T, P>(
  args: ParsedArgs, label: string, job: (pool: ReturnType<typeof createNodeEnginePool>) => Observable<PoolEvent<T, P>>,
): Promise<T> {
  const pool = createNodeEnginePool(workerCount(args));
  const bar = progressBar(label);
  try {
    const last = await lastValueFrom(job(pool).pipe(tap((e) => { if (e.type === 'progress') bar.update(e.fraction); })));
    bar.done();
    if (last.type !== 'result') throw new Error('the job ended without a result');
    return last.value;
  } finally {
    pool.dispose();
  }
}

function chartGrid(args: ParsedArgs, params: CaseParams): Grid2 {
  // Oblique drives take the general path (Newton per cell, a few ms each): a coarser default grid.
  const vertical = Math.abs(Math.sin(params.drive.direction)) < 1e-12;
  const n = countOption(args, 'n', vertical ? 200 : 40, 1000);
  const def = defaultChartGrid(params, n);
  const scale = flag(args, 'linear') ? 'linear' : 'log';
  const grid: Grid2 = {
    x: { ...def.x, from: numberOption(args, 'freq-from', def.x.from), to: numberOption(args, 'freq-to', def.x.to), scale },
    y: { ...def.y, from: numberOption(args, 'amp-from', def.y.from), to: numberOption(args, 'amp-to', def.y.to), scale },
  };
  if (!(grid.x.from > 0 && grid.x.to > grid.x.from)) throw new UsageError('--freq-from must be > 0 and below --freq-to');
  if (!(grid.y.from > 0 && grid.y.to > grid.y.from)) throw new UsageError('--amp-from must be > 0 and below --amp-to');
  return grid;
}

function requireOption(args: ParsedArgs, name: string): string {
  const v = stringOption(args, name);
  if (v === undefined) throw new UsageError(`option --${name} is required`);
  return v;
}

function checkField(params: CaseParams, field: string): void {
  try {
    getField(params, field);
  } catch (error: unknown) {
    throw new UsageError(error instanceof Error ? error.message : String(error));
  }
}

/** Computes the run a command asks for. */
async function runCommand(command: string, args: ParsedArgs, params: CaseParams): Promise<{ settings: RunSettings; result: RunResult }> {
  switch (command) {
    case 'motion': {
      const settings: RunSettings = { kind: 'motion' };
      const bar = progressBar('motion');
      const result = computeRun(params, settings, { onProgress: (f) => bar.update(f) });
      bar.done();
      return { settings, result };
    }
    case 'margins': {
      const settings: RunSettings = { kind: 'margins', relTolerance: numberOption(args, 'tolerance', 1e-6) };
      return { settings, result: computeRun(params, settings) };
    }
    case 'sweep': {
      const field = requireOption(args, 'field');
      checkField(params, field);
      const spec = {
        field,
        from: numberOption(args, 'from', NaN),
        to: numberOption(args, 'to', NaN),
        steps: countOption(args, 'steps', 11, 10_000),
        scale: flag(args, 'log') ? ('log' as const) : ('linear' as const),
        tolerance: args.options.has('tolerance') ? numberOption(args, 'tolerance', 0) : undefined,
      };
      if (!Number.isFinite(spec.from) || !Number.isFinite(spec.to)) throw new UsageError('--from and --to are required numbers');
      if (spec.steps < 2) throw new UsageError('--steps must be at least 2');
      const value = await onPool(args, 'sweep', (pool) => pool.sweep(params, spec));
      return { settings: { kind: 'sweep', spec }, result: { kind: 'sweep', value } };
    }
    case 'chart': {
      const grid = chartGrid(args, params);
      const value = await onPool(args, 'chart', (pool) => pool.chart(params, grid));
      return { settings: { kind: 'chart', grid }, result: { kind: 'chart', value } };
    }
    case 'map': {
      const n = countOption(args, 'n', 9, 500);
      const grid: Grid2 = {
        x: { field: requireOption(args, 'x-field'), from: numberOption(args, 'x-from', NaN), to: numberOption(args, 'x-to', NaN), count: n },
        y: { field: requireOption(args, 'y-field'), from: numberOption(args, 'y-from', NaN), to: numberOption(args, 'y-to', NaN), count: n },
      };
      checkField(params, grid.x.field);
      checkField(params, grid.y.field);
      if (![grid.x.from, grid.x.to, grid.y.from, grid.y.to].every(Number.isFinite)) {
        throw new UsageError('--x-from, --x-to, --y-from and --y-to are required numbers');
      }
      const value = await onPool(args, 'map', (pool) => pool.outcomeMap(params, grid));
      return { settings: { kind: 'map', grid }, result: { kind: 'map', value } };
    }
    case 'basin': {
      const def = defaultBasinGrid(params, countOption(args, 'n', 11, 500));
      const grid: Grid2 = {
        x: { ...def.x, from: numberOption(args, 'angle-from', def.x.from), to: numberOption(args, 'angle-to', def.x.to) },
        y: { ...def.y, from: numberOption(args, 'rate-from', def.y.from), to: numberOption(args, 'rate-to', def.y.to) },
      };
      const value = await onPool(args, 'basin', (pool) => pool.basin(params, grid));
      return { settings: { kind: 'basin', grid }, result: { kind: 'basin', value } };
    }
    default:
      throw new UsageError(`unknown command "${command}"`);
  }
}

async function main(argv: readonly string[]): Promise<number> {
  const args = parseArgs(argv);
  const command = args.command;
  if (!command || flag(args, 'help') || command === 'help') {
    process.stdout.write(`${USAGE}\n`);
    return command ? 0 : 2;
  }
  if (command === 'template') {
    const id = stringOption(args, 'demo');
    const rig = id === undefined ? undefined : DEMO_RIGS.find((d) => d.id === id);
    if (id !== undefined && !rig) throw new UsageError(`no demo rig "${id}"; known: ${DEMO_RIGS.map((d) => d.id).join(', ')}`);
    process.stdout.write(`${toJson(rig ? rig.params : templateCase())}\n`);
    return 0;
  }
  if (command === 'check') {
    const path = args.positional[0];
    if (!path) throw new UsageError('a run record file is required');
    const parsed = parseRunRecord(readJson(path));
    if (!parsed.ok) throw new InputError(`${path}: invalid run record\n  ${parsed.field || '(record)'}: ${parsed.message}`);
    const bar = progressBar(`check ${parsed.value.kind}`);
    const report = recheckRun(parsed.value, numberOption(args, 'tolerance', 1e-6), { onProgress: (f) => bar.update(f) });
    bar.done();
    const { rerun: _rerun, ...shown } = report;
    process.stdout.write(`${toJson(shown)}\n`);
    process.stderr.write(
      report.ok
        ? `recheck confirmed: digest ${report.digestMatches ? 'matches' : 'differs (engine version changed)'}, summary within ${report.relTolerance}\n`
        : `recheck disputed: digest ${report.digestMatches ? 'matches' : 'differs'}, ${report.compared.filter((c) => !c.ok).map((c) => c.key).join(', ') || 'no summary difference'}\n`,
    );
    if (!report.ok) throw new MismatchExit();
    return 0;
  }
  if (command === 'fit') {
    const caseFile = stringOption(args, 'case');
    const request = fitRequest(args, caseFile === undefined ? undefined : readCase(caseFile));
    const fit = await onPool(args, `fit ${request.model}`, (pool) => pool.fit(request));
    process.stdout.write(fitOutput(args, fit));
    return 0;
  }
  const params = readCase(args.positional[0]);
  const { settings, result } = await runCommand(command, args, params);
  const record = makeRunRecord(params, settings, result);
  if (flag(args, 'csv')) process.stdout.write(toCsv(result));
  else if (flag(args, 'record')) process.stdout.write(`${toJson(record)}\n`);
  else process.stdout.write(`${toJson({ record, result: result.value })}\n`);
  return 0;
}

main(process.argv.slice(2)).then(
  (code) => {
    process.exitCode = code;
  },
  (error: unknown) => {
    if (error instanceof MismatchExit) {
      process.exitCode = 1;
    } else if (error instanceof UsageError) {
      process.stderr.write(`error: ${error.message}\n\n${USAGE}\n`);
      process.exitCode = 2;
    } else if (error instanceof InputError || error instanceof TraceInputError) {
      process.stderr.write(`error: ${error.message}\n`);
      process.exitCode = 2;
    } else {
      process.stderr.write(`engine error: ${error instanceof Error ? error.message : String(error)}\n`);
      process.exitCode = 3;
    }
  },
);
