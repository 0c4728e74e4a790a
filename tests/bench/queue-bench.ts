/**
 * Server jobs on the queue (server/jobs): chunk throughput with one and with two worker processes (one engine
 * thread each) on a 20 x 40 outcome map of 40 s motion runs (one chunk per row), and the queue's overhead per chunk (a job's wall time less the time the
 * same tasks take computed in this process, per chunk) on a map of 100 tiny rows. A fresh database of the private
 * cluster; workers run the TypeScript sources through tsx and are warmed with a small job before timing. Best of
 * two per figure: the machine is shared.
 */
import { randomUUID } from 'node:crypto';
import { performance } from 'node:perf_hooks';
import { QueryTypes, type Sequelize } from 'sequelize';
import { templateCase, type CaseParams } from '../../shared/case';
import { computeRun, defaultRunSettings, type RunSettings } from '../../shared/engine/run-record';
import { Lab, Membership, Revision, User } from '../../server/db/models';
import { createSequelize } from '../../server/db/sequelize';
import { createJob } from '../../server/jobs/job-store';
import { startQueue } from '../../server/jobs/queue';
import { checkoutPaths } from '../../server/paths';
import { prepareDatabase, recreateDatabase } from '../../server/scripts/db-tasks';
import { ensurePostgres, stopPostgres } from '../../server/scripts/pg';
import { startWorkerProcess, type WorkerProcess } from '../../server/scripts/server-process';
import { createCase } from '../../server/services/case-service';

const DATABASE = 'quiverpoint_bench_queue';

function mapSettings(params: CaseParams, nx: number, ny: number): RunSettings {
  const d = defaultRunSettings('map', params);
  return { ...d, grid: { x: { ...d.grid.x, count: nx }, y: { ...d.grid.y, count: ny } } } as RunSettings;
}

export async function run(): Promise<{ throughput: Record<string, number>; speedUp: number; overheadMs: number }> {
  const cluster = await ensurePostgres({ fsync: false, log: () => undefined });
  const url = await recreateDatabase(cluster.url, DATABASE);
  await prepareDatabase(url, { seed: false });
  const sequelize: Sequelize = createSequelize(url, { poolMax: 3 });
  const boss = await startQueue({ databaseUrl: url, chunkTimeoutSeconds: 600, chunkRetries: 1, maintenanceSeconds: 30 });
  boss.on('error', () => undefined);
  const workers: WorkerProcess[] = [];
  const env = { ...process.env, NODE_ENV: 'production', DATABASE_URL: url, QP_WORKER_THREADS: '1', LOG_LEVEL: 'info' };
  const { repoRoot } = checkoutPaths();
  try {
    const user = await User.create({ email: `bench-${randomUUID()}@bench.quiverpoint.test`, name: 'Bench', passwordHash: 'unused' });
    const lab = await Lab.create({ name: 'Queue bench' });
    await Membership.create({ labId: lab.id, userId: user.id, role: 'analyst' });

    /** Files a case and runs `settings` as a job; the wall time from submit to the stored run, in seconds. */
    const timeJob = async (params: CaseParams, settings: RunSettings): Promise<{ seconds: number; chunks: number }> => {
      const detail = await createCase(sequelize, { id: user.id, name: user.name }, lab.id, 'analyst', { title: `bench ${randomUUID()}`, tags: [], params });
      const revision = await Revision.findOne({ where: { caseId: detail.id, number: 1 } });
      const started = performance.now();
      const id = await createJob(sequelize, boss, {
        labId: lab.id, caseId: detail.id, revisionId: revision!.id, revision: 1, params: revision!.params as CaseParams,
        settings, rerunOf: null, submittedBy: user.id,
      });
      for (;;) {
        const [job] = await sequelize.query<{ state: string; chunks_total: number; error: string | null }>(
          'SELECT state, chunks_total, error FROM jobs WHERE id = $1', { bind: [id], type: QueryTypes.SELECT },
        );
        if (job?.state === 'succeeded') return { seconds: (performance.now() - started) / 1000, chunks: job.chunks_total };
        if (job && job.state !== 'queued' && job.state !== 'running') throw new Error(`bench job ${job.state}: ${job.error}`);
        await new Promise((r) => setTimeout(r, 100));
      }
    };

    const heavy = templateCase();
    heavy.run.duration = 40;
    heavy.run.outputPoints = 200;
    // 40 s runs, as in an overnight map; 40 rows of 20 cells: many chunks, so the figure is the queue's throughput
    // rather than one job's last chunk.
    const heavySettings = mapSettings(heavy, 20, 40);
    const tiny = templateCase();
    tiny.run.duration = 0.25;
    tiny.run.outputPoints = 20;
    const tinySettings = mapSettings(tiny, 2, 100);

    const throughput: Record<string, number> = {};
    for (const count of [1, 2]) {
      while (workers.length < count) workers.push(await startWorkerProcess({ repoRoot, mode: 'tsx', env }));
      await timeJob(tiny, mapSettings(tiny, 2, 4 * count)); // warm every worker's engine thread
      let best = Infinity;
      let chunks = 0;
      for (let i = 0; i < 2; i++) {
        const t = await timeJob(heavy, heavySettings);
        best = Math.min(best, t.seconds);
        chunks = t.chunks;
      }
      throughput[`${count}`] = chunks / best;
      console.log(`chunk throughput, ${count} worker process${count > 1 ? 'es' : ''} (1 thread each): ${(chunks / best).toFixed(2)} chunks/s (${chunks} chunks of a 20 x 40 map of 40 s runs in ${best.toFixed(2)} s)`);
    }
    const speedUp = throughput['2']! / throughput['1']!;
    console.log(`chunk throughput, 2 workers / 1 worker: x${speedUp.toFixed(2)} (target >= 1.8)`);

    // Overhead: one worker, a job of 100 tiny chunks, less the same tasks computed here.
    await workers.pop()?.stop();
    let bestOverhead = Infinity;
    computeRun(tiny, tinySettings); // warm this thread's engine too
    for (let i = 0; i < 2; i++) {
      const t0 = performance.now();
      computeRun(tiny, tinySettings);
      const local = (performance.now() - t0) / 1000;
      const job = await timeJob(tiny, tinySettings);
      bestOverhead = Math.min(bestOverhead, ((job.seconds - local) * 1000) / job.chunks);
    }
    console.log(`queue overhead per chunk (1 worker, 100 tiny chunks, wall time less compute): ${bestOverhead.toFixed(1)} ms`);
    return { throughput, speedUp, overheadMs: bestOverhead };
  } finally {
    await Promise.allSettled(workers.map((w) => w.stop()));
    await boss.stop({ graceful: false, wait: true }).catch(() => undefined);
    await sequelize.close();
    if (cluster.startedNow) stopPostgres(() => undefined);
  }
}

if (require.main === module) {
  run().catch((err: unknown) => {
    console.error(err);
    process.exitCode = 1;
  });
}
