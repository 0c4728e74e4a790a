// `npm run bench`: runs the exported `run()` of every tests/bench/*-bench.ts module, in name order.
import { readdirSync } from 'node:fs';
import { join } from 'node:path';
import { pathToFileURL } from 'node:url';

interface BenchModule {
  run: () => unknown;
}

function isBenchModule(value: unknown): value is BenchModule {
  return typeof value === 'object' && value !== null && typeof (value as { run?: unknown }).run === 'function';
}

async function main(): Promise<void> {
  const dir = __dirname;
  // The API bench needs PostgreSQL and has its own command (npm run bench:api).
  const files = readdirSync(dir).filter((f) => f.endsWith('-bench.ts') && f !== 'api-bench.ts').sort();
  for (const file of files) {
    const loaded: unknown = await import(pathToFileURL(join(dir, file)).href);
    // a CommonJS-compiled module may arrive wrapped in `default`
    const wrapped = typeof loaded === 'object' && loaded !== null ? (loaded as { default?: unknown }).default : undefined;
    const mod = isBenchModule(loaded) ? loaded : wrapped;
    if (!isBenchModule(mod)) throw new Error(`${file} does not export run()`);
    console.log(`\n=== ${file} ===`);
    await mod.run();
  }
}

main().catch((err: unknown) => {
  console.error(err);
  process.exitCode = 1;
});
