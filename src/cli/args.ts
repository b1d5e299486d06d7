// A small argument reader for the cachewright commands: options are declared per command, so an
// unknown or malformed option is a usage error (exit 2) with a message, never an exception.
import { fail, ok, type Outcome } from '../core/results';

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
    const arg = argv[i] as string;
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

export function formatOption(args: ParsedArgs): Outcome<'text' | 'json'> {
  const format = lastOption(args, 'format') ?? 'text';
  if (format !== 'text' && format !== 'json') return fail(`--format must be text or json, not "${format}"`);
  return ok(format);
}
