/**
 * `tsx server/scripts/pg-cli.ts up|down|status`: manage the private PostgreSQL cluster of this checkout.
 */
import { ensurePostgres, statusPostgres, stopPostgres } from './pg';

const command = process.argv[2] ?? 'status';
try {
  if (command === 'up') {
    const cluster = ensurePostgres({ databases: ['quiverpoint', 'quiverpoint_test', 'quiverpoint_e2e'] });
    console.log(cluster.external ? `using ${cluster.url}` : `PostgreSQL ready: ${cluster.url.replace(/:[^:@/]+@/, ':***@')}`);
  } else if (command === 'down') {
    stopPostgres();
  } else if (command === 'status') {
    console.log(statusPostgres());
  } else {
    console.error('usage: pg-cli.ts up|down|status');
    process.exitCode = 2;
  }
} catch (err) {
  console.error(err instanceof Error ? err.message : String(err));
  process.exitCode = 1;
}
