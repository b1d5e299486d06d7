// The result types every front end consumes: the CLI's outputs, the editor's diagnostics and the
// sizing panel all read these, so they are plain data (JSON-safe apart from bigint byte counts).

export type Severity = 'error' | 'warning' | 'info';

/**
 * The one result shape: parsing user input never throws across a module boundary, it returns one
 * of these. The error is a sentence by default; a caller that needs more says what (E).
 */
export type Outcome<T, E = string> = { ok: true; value: T } | { ok: false; error: E };

export const ok = <T>(value: T): { ok: true; value: T } => ({ ok: true, value });
export const fail = <E = string>(error: E): { ok: false; error: E } => ({ ok: false, error });

/** A place in a definition file. Lines and columns are 1-based; offsets are UTF-16 code units. */
export interface SourceRange {
  offset: number;
  length: number;
  line: number;
  column: number;
  endLine: number;
  endColumn: number;
}

/** One replacement in the original text: `length` UTF-16 units at `offset` become `text`. */
export interface TextEdit {
  offset: number;
  length: number;
  text: string;
}

export interface Fix {
  title: string;
  edits: TextEdit[];
}

export interface RelatedLocation {
  message: string;
  pointer: string;
  range: SourceRange;
  /** Absolute path of another definition file it sits in (absent: the finding's own file). */
  file?: string;
}

/** How an accepted finding was accepted: an accept comment in the definition, or the mapping file's accept list. */
export interface Acceptance {
  reason: string;
  from: 'comment' | 'mapping';
}

/** One finding; `Rule` narrows the rule id (the lint's report uses its registry's ids). */
export interface Finding<Rule extends string = string> {
  rule: Rule;
  severity: Severity;
  message: string;
  /** RFC 6901 JSON Pointer into the definition file. */
  pointer: string;
  range: SourceRange;
  fix?: Fix;
  /** Other fixes offered beside `fix` (e.g. a measured target beside full coverage); `--fix` applies `fix` only. */
  alternatives?: Fix[];
  related?: RelatedLocation[];
  accepted?: Acceptance;
  /**
   * The machine and the disk the finding belongs to, as the report names them (a disk's finding
   * carries both, a machine's own only `machine`). Absent for a finding of the file (syntax, accept
   * comments, values outside any machine) and for one about a whole host.
   */
  machine?: string;
  disk?: string;
  /** A finding about a whole hypervisor host (it spans files): the host's name. */
  host?: string;
  /** The scalar value the finding points at, as data (absent when it points at a disk or machine). */
  written?: string;
}

/** The sizing numbers of one disk (docs/cli.md). Byte counts are exact integers. */
export interface SizingReport {
  virtualSize: bigint;
  clusterSize: bigint;
  l2EntryBytes: bigint;
  l2FullCoverage: bigint;
  l2Effective: bigint;
  l2CoveredBytes: bigint;
  refcountEffective: bigint;
  layers: number;
  cacheMemoryTotal: bigint;
}
