// A small argument reader for the cachewright commands: options are declared per command, so an
// unknown or malformed option is a usage error (exit 2) with a message, never an exception.
import { fail, ok, type Outcome } from '../core/results';
import { checkClusterSize, checkExtendedL2, checkSlice, DEFAULT_CLUSTER } from '../core/sizing';
import { parseSize } from '../core/units';
import { EXIT_OK, EXIT_USAGE, type CommandIO } from './io';

export interface OptionSpec {
  /** Takes a value (`--size 20G` or `--size=20G`), or is a flag. */
  value: boolean;
  repeatable?: boolean;
}

export interface ParsedArgs {
  positionals: string[];
  options: Map<string, string[]>;
  flags: Set<string>;
}

export function parseArgs(argv: readonly string[], spec: Record<string, OptionSpec>): Outcome<ParsedArgs> {
  const parsed: ParsedArgs = { positionals: [], options: new Map(), flags: new Set() };
  for (let i = 0; i < argv.length; i++) {
    const arg = argv[i];
    if (arg === undefined) continue;
    if (arg === '--') {
      parsed.positionals.push(...argv.slice(i + 1));
      break;
    }
    if (!arg.startsWith('--') || arg === '-') {
      if (arg.startsWith('-') && arg !== '-') return fail(`unknown option ${arg}`);
      parsed.positionals.push(arg);
      continue;
    }
    const eq = arg.indexOf('=');
    const name = arg.slice(2, eq === -1 ? undefined : eq);
    const option = spec[name];
    if (!option) return fail(`unknown option --${name}`);
    if (!option.value) {
      if (eq !== -1) return fail(`--${name} takes no value`);
      parsed.flags.add(name);
      continue;
    }
    let value: string | undefined;
    if (eq !== -1) value = arg.slice(eq + 1);
    else {
      value = argv[i + 1];
      if (value === undefined || value.startsWith('--')) return fail(`--${name} needs a value`);
      i++;
    }
    const values = parsed.options.get(name) ?? [];
    if (values.length > 0 && !option.repeatable) return fail(`--${name} is given more than once`);
    values.push(value);
    parsed.options.set(name, values);
  }
  return ok(parsed);
}

export const lastOption = (args: ParsedArgs, name: string): string | undefined => args.options.get(name)?.at(-1);

export const TEXT_OR_JSON = ['text', 'json'] as const;

/** The --format value (text when absent), one of the formats the command writes. */
export function formatOption<F extends string>(args: ParsedArgs, formats: readonly F[]): Outcome<F> {
  const format = lastOption(args, 'format') ?? 'text';
  const known = formats.find((f) => f === format);
  if (known === undefined) return fail(`--format must be ${formats.slice(0, -1).join(', ')} or ${formats.at(-1) ?? ''}, not "${format}"`);
  return ok(known);
}

/** The --allow-warnings count (undefined when absent), a whole number of 0 or more. */
export function allowWarningsOption(args: ParsedArgs): Outcome<number | undefined> {
  const raw = lastOption(args, 'allow-warnings');
  if (raw === undefined) return ok(undefined);
  if (!/^\d+$/.test(raw) || !Number.isSafeInteger(Number(raw))) return fail(`--allow-warnings needs a whole number of warnings (0 or more), not "${raw}"`);
  return ok(Number(raw));
}

/** Prints a usage error the way every command does: its name, the message, then its usage text. */
export function usageError(io: Pick<CommandIO, 'stderr'>, command: string, usage: string, message: string): number {
  io.stderr(`cachewright ${command}: ${message}\n\n${usage}`);
  return EXIT_USAGE;
}

/**
 * A command's request read from its arguments, or the exit code it ends with: --help prints the
 * usage text (exit 0); a bad option, or what `read` refuses, is a usage error (exit 2).
 */
export function readCommand<T>(argv: readonly string[], spec: Record<string, OptionSpec>, command: { name: string; usage: string }, io: Pick<CommandIO, 'stdout' | 'stderr'>, read: (args: ParsedArgs) => Outcome<T>): Outcome<T, number> {
  const args = parseArgs(argv, spec);
  if (args.ok && args.value.flags.has('help')) {
    io.stdout(command.usage);
    return fail(EXIT_OK);
  }
  const request = args.ok ? read(args.value) : args;
  return request.ok ? request : fail(usageError(io, command.name, command.usage, request.error));
}

/** A size option as bytes (undefined when absent), or a usage message naming the option. */
export function sizeOption(args: ParsedArgs, name: string, what: string): Outcome<bigint | undefined> {
  const raw = lastOption(args, name);
  if (raw === undefined) return ok(undefined);
  const parsed = parseSize(raw);
  return parsed.ok ? parsed : fail(`--${name} (${what}): ${parsed.error}`);
}

export interface DiskGeometryOptions {
  virtualSize: bigint;
  clusterSize: bigint;
  extendedL2: boolean;
  /** Absent: whole L2 tables. */
  cacheEntrySize?: bigint;
}

/** --size (required), --cluster-size, --extended-l2 and --cache-entry-size, each checked as a qcow2 image allows. */
export function diskGeometryOptions(args: ParsedArgs): Outcome<DiskGeometryOptions> {
  const size = sizeOption(args, 'size', 'virtual size');
  if (!size.ok) return size;
  if (size.value === undefined) return fail('--size is required (the virtual size of the disk, e.g. 20G)');
  if (size.value === 0n) return fail('--size (virtual size): a disk of 0 bytes has nothing to cache');
  const clusterRaw = sizeOption(args, 'cluster-size', 'cluster size');
  if (!clusterRaw.ok) return clusterRaw;
  const cluster = checkClusterSize(clusterRaw.value ?? DEFAULT_CLUSTER);
  if (!cluster.ok) return fail(`--cluster-size: ${cluster.error}`);
  const extendedL2 = args.flags.has('extended-l2');
  const extended = checkExtendedL2(cluster.value, extendedL2);
  if (!extended.ok) return fail(`--extended-l2: ${extended.error}`);
  const entryRaw = sizeOption(args, 'cache-entry-size', 'cache entry size');
  if (!entryRaw.ok) return entryRaw;
  if (entryRaw.value !== undefined) {
    const entry = checkSlice(entryRaw.value, cluster.value);
    if (!entry.ok) return fail(`--cache-entry-size: ${entry.error}`);
  }
  return ok({ virtualSize: size.value, clusterSize: cluster.value, extendedL2, ...(entryRaw.value !== undefined ? { cacheEntrySize: entryRaw.value } : {}) });
}
