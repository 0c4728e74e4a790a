// Stored results of the demo seed: each seeded run's stored result size (encoded text and gzip), and the server's
// rerun throughput per run kind on engine worker threads, as the verifier (server/services/run-verifier.ts) reruns
// them. The seed runs in a fresh database of the private cluster; the pool is warmed first, so thread start-up
// (tsx transform) is not counted. Best of three per kind: the machine is shared.
import { availableParallelism } from 'node:os';
import { lastValueFrom } from 'rxjs';
import type { Sequelize } from 'sequelize';
import { parseCase } from '../../shared/case/validate';
import { parseRunSettingsFor } from '../../shared/engine/run-kinds';
import { createEnginePool } from '../../server/compute/engine-pool';
import { Revision, Run, RunVerification } from '../../server/db/models';
import { createSequelize } from '../../server/db/sequelize';
import { prepareDatabase, recreateDatabase } from '../../server/scripts/db-tasks';
import { ensurePostgres, stopPostgres } from '../../server/scripts/pg';

const DATABASE = 'quiverpoint_bench_results';

export interface VerifyBenchFigures {
  sizes: Array<{ kind: string; state: string; rawBytes: number; compressedBytes: number }>;
  throughput: Array<{ kind: string; runs: number; threads: number; runsPerSecond: number }>;
}

export async function run(): Promise<VerifyBenchFigures> {
  const cluster = await ensurePostgres({ fsync: false, log: () => undefined });
  const url = await recreateDatabase(cluster.url, DATABASE);
  let sequelize: Sequelize | undefined;
  const threads = Math.min(2, availableParallelism());
  const pool = createEnginePool(threads);
  try {
    await prepareDatabase(url, { seed: true });
    sequelize = createSequelize(url, { poolMax: 2 });
    const runs = await Run.findAll({ order: [['createdAt', 'ASC']] });
    const verifications = new Map((await RunVerification.findAll()).map((v) => [v.runId, v]));
    const sizes = runs.map((r) => {
      const v = verifications.get(r.id);
      return { kind: r.kind, state: v?.state ?? 'pending', rawBytes: v?.rawBytes ?? 0, compressedBytes: v?.compressedBytes ?? 0 };
    });
    console.log('stored results of the seeded runs (encoded text, gzip):');
    for (const s of sizes) {
      console.log(`  ${s.kind.padEnd(8)} ${s.state.padEnd(12)} ${(s.rawBytes / 1024).toFixed(1).padStart(8)} kB raw ${(s.compressedBytes / 1024).toFixed(1).padStart(8)} kB gzip (${((100 * s.compressedBytes) / Math.max(1, s.rawBytes)).toFixed(0)} %)`);
    }

    const jobs = await Promise.all(
      runs.map(async (r) => {
        const revision = await Revision.findByPk(r.revisionId, { attributes: ['params'] });
        const params = parseCase(revision?.params);
        if (!params.ok) throw new Error('a seeded revision does not parse');
        const settings = parseRunSettingsFor(params.value, r.settings);
        if (!settings.ok) throw new Error(`seeded settings: ${settings.message}`);
        return { kind: r.kind, params: params.value, settings: settings.value };
      }),
    );
    const first = jobs[0];
    if (first) await lastValueFrom(pool.run(first.params, first.settings));
    const throughput: VerifyBenchFigures['throughput'] = [];
    for (const kind of [...new Set(jobs.map((j) => j.kind))]) {
      const ofKind = jobs.filter((j) => j.kind === kind);
      let best = Infinity;
      for (let i = 0; i < 3; i++) {
        const t0 = performance.now();
        // One run after another, as the verifier takes them; each run's chunks spread over the threads.
        for (const job of ofKind) await lastValueFrom(pool.run(job.params, job.settings));
        best = Math.min(best, (performance.now() - t0) / 1000);
      }
      throughput.push({ kind, runs: ofKind.length, threads, runsPerSecond: ofKind.length / best });
    }
    console.log(`server rerun throughput on ${threads} engine thread(s), seeded runs, best of 3:`);
    for (const t of throughput) console.log(`  ${t.kind.padEnd(8)} ${t.runs} runs  ${t.runsPerSecond.toFixed(2)} runs/s`);
    return { sizes, throughput };
  } finally {
    pool.dispose();
    await sequelize?.close();
    if (cluster.startedNow) stopPostgres(() => undefined);
  }
}
