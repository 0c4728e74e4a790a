/**
 * Quiverpoint command line: `npm run cli -- <command> ...` (tsx server/cli/main.ts).
 *
 * Commands print JSON on stdout (CSV with --csv), a progress bar on stderr, and exit 0 on success, 1 when a
 * recheck finds a mismatch, 2 on bad input (the field and the reason are printed), 3 when the engine fails.
 */
import { readFileSync } from 'node:fs';
import { availableParallelism } from 'node:os';
import { join } from 'node:path';
import { lastValueFrom, tap, type Observable } from 'rxjs';
import { DEMO_RIGS, parseCase, templateCase, type CaseParams } from '../../shared/case';
import type { PoolEvent, WorkerPool } from '../../shared/compute/worker-pool';
import { defaultChartGrid } from '../../shared/engine/chart';
import { makeRunRecord, parseRunRecord, recheckRun } from '../../shared/engine/run-record';
import {
  computeRun, defaultHoldProbSettings, defaultLeanestSettings, MAX_HOLDPROB_SAMPLES, isRunKind, MAX_CHART_COUNT, MAX_LEANEST_COUNT, MAX_MAP_COUNT, MAX_SWEEP_STEPS, parseRunSettingsFor, runKind,
  type RunKind, type RunResult, type RunSettings, type RunSettingsOf,
} from '../../shared/engine/run-kinds';
import { defaultBasinGrid } from '../../shared/engine/sweep';
import { ENGINE_VERSION } from '../../shared/engine/version';
import { createEnginePool } from '../compute/engine-pool';
import { repoRoot } from '../paths';
import { fitOutput, fitRequest, TraceInputError } from './fit-command';
import { countOption, flag, numberOption, parseArgs, stringOption, UsageError, type ParsedArgs } from './args';
import { toCsv, toJson } from './output';
import { followJob, runOnServer, ServerClient, ServerJobError, signIn, storedResult } from './server-job';
import type { JobView } from '../../shared/api';

const USAGE = `usage: npm run cli -- <command> [options]

  motion  <case.json>                      simulate the motion; outcome and series
  margins <case.json> [--tolerance 1e-6]   Floquet multipliers, periodic motions, drive limits, margin
  sweep   <case.json> --field drive.amplitude --from X --to Y --steps N [--log] [--tolerance T]
  chart   <case.json> [--freq-from F --freq-to F --amp-from A --amp-to A --n 200 (40 oblique) --linear]
  map     <case.json> --x-field F --x-from X --x-to X --y-field F --y-from Y --y-to Y [--n 9]
  basin   <case.json> [--n 11 --angle-from -3.14 --angle-to 3.14 --rate-from R --rate-to R]
  leanest <case.json> [--margin 15] [--cost acceleration|stroke|force|power] [--moving-mass KG]
          [--freq-from F --freq-to F --amp-from A --amp-to A --n 40 --linear] [--tolerance 1e-6]
          shaker: [--rated-force N --max-stroke M --max-velocity M/S --min-freq HZ --max-freq HZ]
          motor and crank: [--min-radius M --max-radius M --min-rpm RPM --max-rpm RPM]
                                           cheapest drive keeping the amplitude margin; optimum, binding limit
  holdprob <case.json> [--samples 256] [--seed 1927] [--target-width 0.1] [--parts tolerances|noise|both]
          [--tolerance 1e-4]               probability of holding under the case's tolerances and drive noise,
                                           Wilson 95 % interval, rank-correlation ranking, margin histogram
  fit     <trace.csv> [--model viscous|viscous+quadratic|viscous+friction] [--angle-unit deg|rad] [--case case.json]
                                           free-swing fit: L, zeta, [c | mu], sensor zero, start state (SI)
  check   <run.json>                       rerun a stored run record and compare digest and summary
  token   --server URL --email E           sign in (password from QP_PASSWORD or stdin); print an access token
  job     <caseId> <jobId> --server URL [--cancel]
                                           follow a server job to its end and print its stored run (or cancel it)
  template [--demo <id>]                   print a complete valid case (or a demo rig)

  help, --help, -h                         print this help
  --version                                print the Quiverpoint and engine versions

  common: --csv (CSV instead of JSON), --record (print only the run record), --workers N (default: cores)
  server: sweep, chart, map, basin, leanest, holdprob with --server URL [--token T | QP_TOKEN] and
          --case ID [--rev N] (the saved case the file matches) or --lab ID [--title T] (file it first):
          computed by the server's job workers, stored with the revision, printed as above
  limits: sweep --steps <= ${MAX_SWEEP_STEPS}; chart --n <= ${MAX_CHART_COUNT}; map and basin --n <= ${MAX_MAP_COUNT};
          leanest --n <= ${MAX_LEANEST_COUNT}; holdprob --samples <= ${MAX_HOLDPROB_SAMPLES}
  exit:   0 done, 1 recheck mismatch, 2 bad input (or refused by the server), 3 engine failure (or the job failed)`;

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
  args: ParsedArgs, label: string, job: (pool: WorkerPool) => Observable<PoolEvent<T, P>>,
): Promise<T> {
  const pool = createEnginePool(workerCount(args));
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

/**
 * Computes a run: kinds that split into several tasks on a pool of worker threads, the others in this thread. Both
 * drive the registry's job for the kind, so the numbers are the same.
 */
async function compute(args: ParsedArgs, params: CaseParams, settings: RunSettings): Promise<RunResult> {
  if (runKind(settings.kind).chunked) return onPool(args, settings.kind, (pool) => pool.run(params, settings));
  const bar = progressBar(settings.kind);
  const result = computeRun(params, settings, { onProgress: (f) => bar.update(f) });
  bar.done();
  return result;
}

function requireOption(args: ParsedArgs, name: string): string {
  const v = stringOption(args, name);
  if (v === undefined) throw new UsageError(`option --${name} is required`);
  return v;
}

/** Settings from the command's options, per kind; the registry's schema checks them afterwards. */
const SETTINGS_FROM_ARGS: { readonly [K in RunKind]: (args: ParsedArgs, params: CaseParams) => RunSettingsOf<K> } = {
  motion: () => ({ kind: 'motion' }),
  margins: (args) => ({ kind: 'margins', relTolerance: numberOption(args, 'tolerance', 1e-6) }),
  sweep: (args) => ({
    kind: 'sweep',
    spec: {
      field: requireOption(args, 'field'),
      from: numberOption(args, 'from', NaN),
      to: numberOption(args, 'to', NaN),
      steps: numberOption(args, 'steps', 11),
      scale: flag(args, 'log') ? 'log' : 'linear',
      ...(args.options.has('tolerance') ? { tolerance: numberOption(args, 'tolerance', 0) } : {}),
    },
  }),
  chart: (args, params) => {
    // Oblique drives take the general path (Newton per cell, a few ms each): a coarser default grid.
    const vertical = Math.abs(Math.sin(params.drive.direction)) < 1e-12;
    const def = defaultChartGrid(params, numberOption(args, 'n', vertical ? 200 : 40));
    const scale = flag(args, 'linear') ? 'linear' : 'log';
    return {
      kind: 'chart',
      grid: {
        x: { ...def.x, from: numberOption(args, 'freq-from', def.x.from), to: numberOption(args, 'freq-to', def.x.to), scale },
        y: { ...def.y, from: numberOption(args, 'amp-from', def.y.from), to: numberOption(args, 'amp-to', def.y.to), scale },
      },
    };
  },
  map: (args) => {
    const n = numberOption(args, 'n', 9);
    return {
      kind: 'map',
      grid: {
        x: { field: requireOption(args, 'x-field'), from: numberOption(args, 'x-from', NaN), to: numberOption(args, 'x-to', NaN), count: n },
        y: { field: requireOption(args, 'y-field'), from: numberOption(args, 'y-from', NaN), to: numberOption(args, 'y-to', NaN), count: n },
      },
    };
  },
  basin: (args, params) => {
    const def = defaultBasinGrid(params, numberOption(args, 'n', 11));
    return {
      kind: 'basin',
      grid: {
        x: { field: 'start.angle', from: numberOption(args, 'angle-from', def.x.from), to: numberOption(args, 'angle-to', def.x.to), count: def.x.count },
        y: { field: 'start.rate', from: numberOption(args, 'rate-from', def.y.from), to: numberOption(args, 'rate-to', def.y.to), count: def.y.count },
      },
    };
  },
  leanest: (args, params) => {
    const def = defaultLeanestSettings(params);
    const n = numberOption(args, 'n', def.grid.x.count);
    const scale = flag(args, 'linear') ? 'linear' : 'log';
    const cost = stringOption(args, 'cost') ?? def.cost;
    return {
      ...def,
      marginPercent: numberOption(args, 'margin', def.marginPercent),
      // the schema refuses a word outside the list, naming --cost
      cost: cost as RunSettingsOf<'leanest'>['cost'],
      movingMass: numberOption(args, 'moving-mass', def.movingMass),
      relTolerance: numberOption(args, 'tolerance', def.relTolerance),
      envelope: envelopeFromArgs(args),
      grid: {
        x: { ...def.grid.x, count: n, scale, from: numberOption(args, 'freq-from', def.grid.x.from), to: numberOption(args, 'freq-to', def.grid.x.to) },
        y: { ...def.grid.y, count: n, scale, from: numberOption(args, 'amp-from', def.grid.y.from), to: numberOption(args, 'amp-to', def.grid.y.to) },
      },
    };
  },
  holdprob: (args, params) => {
    const def = defaultHoldProbSettings(params);
    return {
      ...def,
      samples: numberOption(args, 'samples', def.samples),
      seed: numberOption(args, 'seed', def.seed),
      targetWidth: numberOption(args, 'target-width', def.targetWidth),
      // the schema refuses a word outside the list, naming --parts
      parts: (stringOption(args, 'parts') ?? def.parts) as RunSettingsOf<'holdprob'>['parts'],
      relTolerance: numberOption(args, 'tolerance', def.relTolerance),
    };
  },
};

const SHAKER_OPTIONS = ['rated-force', 'max-stroke', 'max-velocity', 'min-freq', 'max-freq'] as const;
const CRANK_OPTIONS = ['min-radius', 'max-radius', 'min-rpm', 'max-rpm'] as const;

/** Leanest-drive envelope from the options: a shaker's ratings or a motor and crank's ranges, never both. */
function envelopeFromArgs(args: ParsedArgs): RunSettingsOf<'leanest'>['envelope'] {
  const given = (names: readonly string[]) => names.filter((n) => args.options.has(n));
  const shaker = given(SHAKER_OPTIONS);
  const crank = given(CRANK_OPTIONS);
  if (shaker.length && crank.length) {
    throw new UsageError(`--${shaker[0]} is a shaker limit and --${crank[0]} a crank limit: give one envelope`);
  }
  const opt = (name: string, scale = 1) => (args.options.has(name) ? { value: numberOption(args, name, NaN) * scale } : null);
  const pick = (entries: Array<[string, { value: number } | null]>) =>
    Object.fromEntries(entries.filter(([, v]) => v !== null).map(([k, v]) => [k, v?.value]));
  if (shaker.length) {
    return {
      kind: 'shaker',
      ...pick([
        ['ratedForce', opt('rated-force')], ['maxStroke', opt('max-stroke')], ['maxVelocity', opt('max-velocity')],
        ['minFrequency', opt('min-freq')], ['maxFrequency', opt('max-freq')],
      ]),
    };
  }
  if (crank.length) {
    return {
      kind: 'crank',
      ...pick([
        ['minRadius', opt('min-radius')], ['maxRadius', opt('max-radius')],
        ['minSpeed', opt('min-rpm', 1 / 60)], ['maxSpeed', opt('max-rpm', 1 / 60)],
      ]),
    };
  }
  return { kind: 'none' };
}

/** Per kind, the option behind each settings field, so an error names what the user typed. */
const OPTION_OF_FIELD: { readonly [K in RunKind]: Readonly<Record<string, string>> } = {
  motion: {},
  margins: { relTolerance: '--tolerance' },
  sweep: { 'spec.field': '--field', 'spec.from': '--from', 'spec.to': '--to', 'spec.steps': '--steps', 'spec.tolerance': '--tolerance' },
  chart: {
    'grid.x.from': '--freq-from', 'grid.x.to': '--freq-to', 'grid.y.from': '--amp-from', 'grid.y.to': '--amp-to',
    'grid.x.count': '--n', 'grid.y.count': '--n',
  },
  map: {
    'grid.x.field': '--x-field', 'grid.x.from': '--x-from', 'grid.x.to': '--x-to', 'grid.y.field': '--y-field',
    'grid.y.from': '--y-from', 'grid.y.to': '--y-to', 'grid.x.count': '--n', 'grid.y.count': '--n',
  },
  basin: {
    'grid.x.from': '--angle-from', 'grid.x.to': '--angle-to', 'grid.y.from': '--rate-from', 'grid.y.to': '--rate-to',
    'grid.x.count': '--n', 'grid.y.count': '--n',
  },
  leanest: {
    marginPercent: '--margin', cost: '--cost', movingMass: '--moving-mass', relTolerance: '--tolerance',
    'grid.x.from': '--freq-from', 'grid.x.to': '--freq-to', 'grid.y.from': '--amp-from', 'grid.y.to': '--amp-to',
    'grid.x.count': '--n', 'grid.y.count': '--n',
    'envelope.ratedForce': '--rated-force', 'envelope.maxStroke': '--max-stroke', 'envelope.maxVelocity': '--max-velocity',
    'envelope.minFrequency': '--min-freq', 'envelope.maxFrequency': '--max-freq',
    'envelope.minRadius': '--min-radius', 'envelope.maxRadius': '--max-radius',
    'envelope.minSpeed': '--min-rpm', 'envelope.maxSpeed': '--max-rpm',
  },
  holdprob: { samples: '--samples', seed: '--seed', targetWidth: '--target-width', parts: '--parts', relTolerance: '--tolerance' },
};

/** The settings a command asks for, checked by the registry's schema for the kind. */
function settingsFor(kind: RunKind, args: ParsedArgs, params: CaseParams): RunSettings {
  const checked = parseRunSettingsFor(params, SETTINGS_FROM_ARGS[kind](args, params));
  if (!checked.ok) throw new UsageError(`${OPTION_OF_FIELD[kind][checked.field] ?? checked.field}: ${checked.message}`);
  return checked.value;
}

/** "quiverpoint 0.1.0 (engine 1.0.0)" */
function versionLine(): string {
  const pkg: unknown = JSON.parse(readFileSync(join(repoRoot(), 'package.json'), 'utf8'));
  const version = typeof pkg === 'object' && pkg !== null && 'version' in pkg ? String(pkg.version) : 'unknown';
  return `quiverpoint ${version} (engine ${ENGINE_VERSION})`;
}

async function main(argv: readonly string[]): Promise<number> {
  const args = parseArgs(argv);
  const command = args.command;
  if (flag(args, 'help') || command === 'help') {
    process.stdout.write(`${USAGE}\n`);
    return 0;
  }
  if (flag(args, 'version')) {
    process.stdout.write(`${versionLine()}\n`);
    return 0;
  }
  if (!command) throw new UsageError('a command is required');
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
  if (command === 'token') {
    const signedIn = await signIn(args);
    process.stdout.write(`${signedIn.token}\n`);
    if (signedIn.expiresAt) process.stderr.write(`valid until ${signedIn.expiresAt}; export QP_TOKEN=<it> to keep it off the command line\n`);
    return 0;
  }
  if (command === 'job') {
    const [caseId, jobId] = args.positional;
    if (!caseId || !jobId) throw new UsageError('job needs <caseId> <jobId>');
    const client = ServerClient.fromArgs(args);
    if (flag(args, 'cancel')) {
      const job = await client.request<JobView>('POST', `/cases/${caseId}/jobs/${jobId}/cancel`);
      process.stderr.write(`server job ${job.id} cancelled\n`);
      return 0;
    }
    const job = await followJob(client, caseId, jobId, progressBar(`server job ${jobId.slice(0, 8)}`));
    const result = await storedResult(client, job);
    const revision = await client.request<{ params: CaseParams }>('GET', `/cases/${caseId}/revisions/${job.revision}`);
    printRun(args, makeRunRecord(revision.params, job.settings as RunSettings, result), result);
    return 0;
  }
  if (!isRunKind(command)) throw new UsageError(`unknown command "${command}"`);
  const params = readCase(args.positional[0]);
  const settings = settingsFor(command, args, params);
  if (args.options.has('server')) {
    if (!runKind(command).chunked) throw new UsageError(`${command} is one short computation; run it here (drop --server)`);
    const { result } = await runOnServer(args, params, args.positional[0] ?? '', settings, progressBar);
    printRun(args, makeRunRecord(params, settings, result), result);
    return 0;
  }
  const result = await compute(args, params, settings);
  printRun(args, makeRunRecord(params, settings, result), result);
  return 0;
}

/** A run as the commands print it: CSV, the record alone, or the record with the full result. */
function printRun(args: ParsedArgs, record: ReturnType<typeof makeRunRecord>, result: RunResult): void {
  if (flag(args, 'csv')) process.stdout.write(toCsv(result));
  else if (flag(args, 'record')) process.stdout.write(`${toJson(record)}\n`);
  else process.stdout.write(`${toJson({ record, result: result.value })}\n`);
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
    } else if (error instanceof ServerJobError) {
      process.stderr.write(`\nerror: ${error.message}\n`);
      process.exitCode = error.exitCode;
    } else if (error instanceof InputError || error instanceof TraceInputError) {
      process.stderr.write(`error: ${error.message}\n`);
      process.exitCode = 2;
    } else {
      process.stderr.write(`engine error: ${error instanceof Error ? error.message : String(error)}\n`);
      process.exitCode = 3;
    }
  },
);
