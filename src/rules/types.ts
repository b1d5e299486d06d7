// What a rule is and what it is handed. A rule is plain data plus hooks: it reads located, typed
// values and the disk's sizing, and reports findings whose fixes come from the helpers here. It never
// parses, never touches the file system and never formats output.
import type { DiskSizing, LayerCache } from '../core/cache';
import type { DriverProfile } from '../core/profiles';
import type { Fix, RelatedLocation, Severity, SourceRange } from '../core/results';
import type { DiskSpec, DiskValues, Located, MachineSpec } from '../model/disks';
import type { Assumptions, HostBudget, Mapping } from '../model/mapping';
import type { ImageChainFacts } from '../model/images';
import type { TraceFacts } from '../model/traces';
import type { Said, Wording } from './wording';

export interface RuleMeta<Id extends string = string, W extends Wording = Wording> {
  id: Id;
  severity: Severity;
  /** One line: what the rule catches. */
  description: string;
  fixable: boolean;
  /** The rule's docs page, relative to the package root. */
  docs: string;
  /** Every text the rule's findings, related places and fix titles carry, by key (src/rules/wording.ts). */
  wording: W;
}

export type SizeField = 'l2Cache' | 'refcountCache' | 'combinedCache' | 'cacheEntrySize';

export interface FixHelpers {
  /** Set a size field: replace the value where it is written, or insert the key where it is absent. */
  setSize(field: SizeField, bytes: bigint, title: string): Fix | undefined;
  setInterval(field: 'cleanupInterval', seconds: number, title: string): Fix | undefined;
}

/** A finding as a rule reports it: the key of its text in the rule's wording and the values that fill it. */
export type FindingInput<W extends Wording = Wording> = Said<W> & FindingPlace;

export interface FindingPlace {
  /** The value the finding is about; absent: the disk (or machine) itself. */
  at?: keyof DiskValues | Located<unknown>;
  fix?: Fix;
  /** Other fixes to offer beside `fix` (the editor lists them; `--fix` applies `fix` only). */
  alternatives?: Fix[];
  related?: RelatedLocation[];
}

export interface DiskCheck {
  disk: DiskSpec;
  sizing: DiskSizing;
  /** The top layer's caches (sizing.layers[0]). */
  top: LayerCache;
  /** The request size and pattern after assumptions. */
  requestSize: bigint;
  pattern: Assumptions['pattern'];
  profile: DriverProfile;
  mapping: Mapping;
  report(finding: FindingInput): void;
  fix: FixHelpers;
  /** The image file the disk names, when the caller read it. */
  image?: { path: string; written: Located<string>; facts: ImageChainFacts; definitionDir: string };
  /** The traces the disk names and their measured curve (or why there is none), when the caller read them. */
  trace?: { written: Located<string[]>; paths: string[]; facts: TraceFacts };
}

export interface SizedDisk {
  disk: DiskSpec;
  sizing: DiskSizing;
}

export interface MachineCheck {
  machine: MachineSpec;
  disks: readonly SizedDisk[];
  mapping: Mapping;
  report(finding: FindingInput): void;
}

/** A machine as the cross-file step sees it: where it is, what it needs, which host it is on. */
export interface PlacedMachine {
  /** Absolute path of its definition file. */
  file: string;
  name: string;
  pointer: string;
  range: SourceRange;
  /** Where the definition names its host. */
  host: { name: string; pointer: string; range: SourceRange };
  memory?: bigint;
  cacheMemoryTotal: bigint;
}

export type HostFindingInput<W extends Wording = Wording> = Said<W> & {
  severity: Severity;
  related: RelatedLocation[];
};

/** One host and every machine placed on it, across all the files linted together. */
export interface HostCheck {
  host: string;
  /** Its memory and cache share; undefined when the mapping knows no memory for it. */
  budget?: HostBudget;
  /** In the order of the files (sorted by path), then of the machines in each. */
  machines: readonly PlacedMachine[];
  /** Reported at the first machine's host value; a severity set in the mapping or editor wins. */
  report(finding: HostFindingInput): void;
}

/** A rule as the engine runs it: any wording, hooks that report by key. */
export interface Rule<Id extends string = string> extends RuleMeta<Id> {
  checkDisk?(check: DiskCheck): void;
  checkMachine?(check: MachineCheck): void;
  /** Runs once per host after every file is linted (rules that need the whole fleet). */
  checkHost?(check: HostCheck): void;
}

/** A check whose `report` takes only the keys of one wording, each with the fill its text asks for. */
type Worded<Check, Input> = Omit<Check, 'report'> & { report(finding: Input): void };

/** A rule as it is written: its hooks see its own wording's keys. */
export interface RuleSpec<Id extends string, W extends Wording> extends Omit<RuleMeta<Id, W>, 'docs'> {
  checkDisk?(check: Worded<DiskCheck, FindingInput<W>>): void;
  checkMachine?(check: Worded<MachineCheck, FindingInput<W>>): void;
  checkHost?(check: Worded<HostCheck, HostFindingInput<W>>): void;
}

export const docsPage = (id: string): string => `docs/rules/${id}.md`;

/** A related place of a finding: a located value or node of the same file, with what it says there. */
export const relatedAt = (message: string, at: { pointer: string; range: SourceRange }): RelatedLocation => ({ message, pointer: at.pointer, range: at.range });

/**
 * A rule from its id, metadata, wording and hooks; its docs page follows from the id. The wording's
 * texts keep their literal types, so each report's key and fill are checked against them.
 */
export function declareRule<const Id extends string, const W extends Wording>(rule: RuleSpec<Id, W>): Rule<Id> & { wording: W } {
  return { ...rule, docs: docsPage(rule.id) };
}
