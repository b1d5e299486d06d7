// Running the rules: each rule's disk hook once per sized disk, its machine hook once per machine,
// and value problems turned into invalid-value findings. Rules report at a located value (or at the
// disk or machine when none is named); the severity the file asks for is attached here.
import { cacheOptionsProblems, type DiskSizing, type LayerCache } from '../core/cache';
import type { DiskSpec, Located, MachineSpec, ValueProblem } from '../model/disks';
import type { ImageChainFacts } from '../model/images';
import type { TraceFacts } from '../model/traces';
import { RULES, ruleOf, say, wordingOf, type RuleId } from '../rules';
import type { DiskCheck, FindingInput, SizedDisk } from '../rules/types';
import { sayFinding } from '../rules/wording';
import { headRange } from './documents';
import type { FileContext, FindingOwner } from './prepare';
import type { LintFinding, MachineUnit } from './report';

/** The image a disk names, as the caller read it. */
export interface DiskImage {
  path: string;
  written: Located<string>;
  facts: ImageChainFacts;
  definitionDir: string;
}

/** The traces a disk names and what reading them gave. */
export interface DiskTrace {
  written: Located<string[]>;
  /** The written paths resolved against the definition file, in the same order. */
  paths: string[];
  facts: TraceFacts;
}

/** The value problems as invalid-value findings of their owner (absent: they belong to the file). */
export function valueProblemFindings(context: FileContext, problems: readonly ValueProblem[], into: LintFinding[], owner?: FindingOwner): void {
  const rule = ruleOf('invalid-value');
  const wording = wordingOf('invalid-value');
  for (const problem of problems) context.add(into, rule, { message: say(wording, 'unreadable', { field: problem.field, problem: problem.message }), pointer: problem.pointer, range: problem.range }, owner);
}

/**
 * The rules that judge the split of a disk's caches (how much goes to L2 and refcount). When the
 * written sizes contradict each other (all three knobs, or a part above the combined size) the
 * driver refuses the disk, so the split they would be judged on never exists: the contradiction
 * (invalid-value, cache-options-conflict) is the disk's only cache-sizing finding. Rules about a
 * written value itself (cache-not-aligned) or the cluster size still run.
 */
const JUDGE_CACHE_SPLIT: ReadonlySet<RuleId> = new Set<RuleId>([
  'l2-cache-undersized',
  'l2-cache-oversized',
  'l2-cache-above-working-set',
  'cache-entry-size-suggested',
  'cleanup-interval-missing',
]);

/** Whether the driver refuses the cache sizes a disk writes ([CACHE]; core/cache.ts). */
function refusesCacheSizes(disk: DiskSpec): boolean {
  const { l2Cache, refcountCache, combinedCache } = disk.values;
  return cacheOptionsProblems({ l2Cache: l2Cache?.value, refcountCache: refcountCache?.value, combinedCache: combinedCache?.value }).length > 0;
}

export function runDiskRules(
  context: FileContext,
  disk: DiskSpec,
  sizing: DiskSizing,
  top: LayerCache,
  image: DiskImage | undefined,
  trace: DiskTrace | undefined,
  machines: readonly MachineSpec[],
  into: LintFinding[],
): void {
  const { mapping, document } = context;
  const fix = context.fixHelpers(disk, machines);
  const owner: FindingOwner = { kind: 'disk', disk };
  const refused = refusesCacheSizes(disk);
  for (const rule of RULES) {
    if (!rule.checkDisk || context.severityOf(rule) === 'off') continue;
    if (refused && JUDGE_CACHE_SPLIT.has(rule.id)) continue;
    const report = (input: FindingInput) => {
      const at = typeof input.at === 'string' ? disk.values[input.at] : input.at;
      context.add(into, rule, {
        message: sayFinding(rule.wording, input),
        pointer: at?.pointer ?? disk.pointer,
        range: at?.range ?? headRange(document, disk.range),
        ...(input.fix ? { fix: input.fix } : {}),
        ...(input.alternatives && input.alternatives.length > 0 ? { alternatives: input.alternatives } : {}),
        ...(input.related ? { related: input.related } : {}),
      }, owner);
    };
    const check: DiskCheck = {
      disk, sizing, top, mapping, fix, report,
      requestSize: disk.values.requestSize?.value ?? mapping.assume.requestSize,
      pattern: disk.values.pattern?.value ?? mapping.assume.pattern,
      profile: mapping.profile,
      ...(image ? { image } : {}),
      ...(trace ? { trace } : {}),
    };
    rule.checkDisk(check);
  }
}

/** Runs the machine hooks over a machine's sized disks; the unit's rule findings are replaced. */
export function runMachineRules(context: FileContext, unit: MachineUnit): void {
  const { machine } = unit;
  const sized: SizedDisk[] = unit.disks.flatMap((d) => (d.result ? [{ disk: d.disk, sizing: d.result.sizing }] : []));
  const into: LintFinding[] = [];
  unit.ruleFindings = into;
  const owner: FindingOwner = { kind: 'machine', machine };
  for (const rule of RULES) {
    if (!rule.checkMachine || context.severityOf(rule) === 'off') continue;
    rule.checkMachine({
      machine, disks: sized, mapping: context.mapping,
      report: (input) => {
        const at = typeof input.at === 'object' ? input.at : undefined;
        context.add(into, rule, {
          message: sayFinding(rule.wording, input),
          pointer: at?.pointer ?? machine.pointer,
          range: at?.range ?? headRange(context.document, machine.range),
          ...(input.related ? { related: input.related } : {}),
        }, owner);
      },
    });
  }
}
