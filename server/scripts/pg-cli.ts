/**
 * `tsx server/scripts/pg-cli.ts up|down|status`: manage the private PostgreSQL cluster of this checkout.
 */
import { ensurePostgres, statusPostgres, stopPostgres } from './pg';

async function main(command: string): Promise<number> {
  if (command === 'up') {
    const cluster = await ensurePostgres({ databases: ['quiverpoint', 'quiverpoint_test', 'quiverpoint_e2e'] });
    console.log(cluster.external ? 'using the server in DATABASE_URL' : `PostgreSQL ready: ${cluster.url.replace(/:[^:@/]+@/, ':***@')}`);
  } else if (command === 'down') {
    stopPostgres();
  } else if (command === 'status') {
    console.log(statusPostgres());
  } else {
    console.error('usage: pg-cli.ts up|down|status');
    return 2;
  }
  return 0;
}

main(process.argv[2] ?? 'status').then(
  (code) => {
    process.exitCode = code;
  },
  (err: unknown) => {
    console.error(err instanceof Error ? err.message : String(err));
    process.exitCode = 1;
  },
);
