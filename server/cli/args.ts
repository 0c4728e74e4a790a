/** Command-line parsing for the CLI: a command, positional arguments and `--name value` / `--flag` options. */

export interface ParsedArgs {
  command: string | undefined;
  positional: string[];
  options: Map<string, string | true>;
}

/** Options that take no value. */
const FLAGS = new Set(['csv', 'record', 'log', 'linear', 'help', 'version']);

export class UsageError extends Error {}

export function parseArgs(argv: readonly string[]): ParsedArgs {
  const positional: string[] = [];
  const options = new Map<string, string | true>();
  for (let i = 0; i < argv.length; i++) {
    const arg = argv[i];
    if (arg === '-h') {
      options.set('help', true);
    } else if (arg.startsWith('--')) {
      const eq = arg.indexOf('=');
      const name = eq > 0 ? arg.slice(2, eq) : arg.slice(2);
      if (eq > 0) {
        options.set(name, arg.slice(eq + 1));
      } else if (FLAGS.has(name)) {
        options.set(name, true);
      } else {
        const value = argv[i + 1];
        if (value === undefined || value.startsWith('--')) throw new UsageError(`option --${name} needs a value`);
        options.set(name, value);
        i++;
      }
    } else {
      positional.push(arg);
    }
  }
  const [command, ...rest] = positional;
  return { command, positional: rest, options };
}

/** A numeric option, or the fallback when absent; refuses non-numbers. */
export function numberOption(args: ParsedArgs, name: string, fallback: number): number {
  const raw = args.options.get(name);
  if (raw === undefined) return fallback;
  const value = typeof raw === 'string' ? Number(raw) : NaN;
  if (!Number.isFinite(value)) throw new UsageError(`option --${name} must be a number, got "${String(raw)}"`);
  return value;
}

/** A positive integer option. */
export function countOption(args: ParsedArgs, name: string, fallback: number, max: number): number {
  const value = numberOption(args, name, fallback);
  if (!Number.isInteger(value) || value < 1 || value > max) {
    throw new UsageError(`option --${name} must be a whole number from 1 to ${max}, got ${value}`);
  }
  return value;
}

export function stringOption(args: ParsedArgs, name: string): string | undefined {
  const raw = args.options.get(name);
  return typeof raw === 'string' ? raw : undefined;
}

export function flag(args: ParsedArgs, name: string): boolean {
  return args.options.get(name) === true;
}
