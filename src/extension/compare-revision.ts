// "Compare with a git revision...": the review `cachewright compare --git REF --format markdown`
// gives in CI, for the workspace as the editor holds it (unsaved edits included). The base is read
// from the revision into a temporary folder (the work tree is never touched); both sides are linted
// with the workspace's mapping file by the engine (disks that name a trace judged by its measured
// curve, as in CI, in a trusted workspace) and paired up by src/review; the summary opens in
// the editor's markdown preview (beside the active editor) as a read-only document.
import * as vscode from 'vscode';
import * as nodePath from 'node:path';
import { extractRevision, listRevisions } from '../git/revision';
import { lintHosts, lintPrepared, loadMapping, prepareDocument, type FileReport, type Mapping } from '../lint';
import { traceRequestsOf } from '../lint/traces';
import { compareRuns } from '../review/compare';
import { renderCompareMarkdown } from '../review/markdown';
import { reviewedFiles } from '../review/types';
import { includedFiles } from './included-files';
import { readDefinitionText, readText, type MappingState } from './mappings';
import { readSettings } from './settings';
import type { TraceCurveCache } from './traces';

export const REVIEW_SCHEME = 'cachewright-review';

export type CompareResult =
  | { ok: true; revision: string; uri: vscode.Uri; markdown: string }
  | { ok: false; error: string };

export interface CompareRequest {
  /** The revision to compare with; asked for when absent. */
  revision?: string;
}

/** Holds the summaries shown so far, each at its own URI, for the markdown preview to read. */
export class ReviewDocuments implements vscode.TextDocumentContentProvider, vscode.Disposable {
  private readonly texts = new Map<string, string>();
  private readonly registration = vscode.workspace.registerTextDocumentContentProvider(REVIEW_SCHEME, this);
  private count = 0;

  add(revision: string, markdown: string): vscode.Uri {
    const safe = revision.replace(/[^A-Za-z0-9._-]+/g, '-').slice(0, 60) || 'revision';
    const uri = vscode.Uri.from({ scheme: REVIEW_SCHEME, path: `/review ${++this.count} against ${safe}.md` });
    this.texts.set(uri.toString(), markdown);
    return uri;
  }

  provideTextDocumentContent(uri: vscode.Uri): string {
    return this.texts.get(uri.toString()) ?? '';
  }

  dispose(): void {
    this.registration.dispose();
  }
}

/** Branches and tags to pick from; whatever is typed instead (a commit, HEAD~2) is taken as it is. */
async function pickRevision(dir: string): Promise<string | undefined> {
  const refs = listRevisions(dir);
  if (!refs.ok) throw new ReviewError(refs.error);
  const pick = vscode.window.createQuickPick();
  pick.title = 'cachewright: compare the workspace with a git revision';
  pick.placeholder = 'A branch, a tag, or any revision git understands (a commit, HEAD~1)';
  pick.items = [
    ...refs.value.branches.map((label) => ({ label, description: 'branch' })),
    ...refs.value.tags.map((label) => ({ label, description: 'tag' })),
  ];
  return new Promise((resolve) => {
    let chosen: string | undefined;
    pick.onDidAccept(() => {
      chosen = pick.selectedItems[0]?.label ?? (pick.value.trim() || undefined);
      pick.hide();
    });
    pick.onDidHide(() => {
      pick.dispose();
      resolve(chosen);
    });
    pick.show();
  });
}

class ReviewError extends Error {}

/**
 * Lints every definition the mapping includes, with the text `read` gives, then the host rule across
 * them. Disks that name a trace are judged by their measured curve, as the command line's review
 * judges them, when `traces` is given.
 */
async function lintSide(mapping: Mapping, limit: number, traces: TraceCurveCache | undefined): Promise<{ path: string; report?: FileReport }[]> {
  const files: { path: string; report?: FileReport }[] = [];
  for (const uri of await includedFiles(mapping)) {
    const read = await readDefinitionText(uri, limit);
    if (read === undefined || 'tooLarge' in read) throw new ReviewError(`${uri.fsPath}: ${read === undefined ? 'cannot be read' : 'is above the cachewright.fileSizeLimit setting'}`);
    const prepared = prepareDocument({ path: uri.fsPath, text: read.text }, mapping);
    const requests = traces ? traceRequestsOf(prepared) : [];
    if (traces && requests.length > 0) await traces.load(requests);
    files.push({ path: uri.fsPath, report: lintPrepared(prepared, traces ? { traces: traces.lookup } : {}) });
    // Each file is linted on its own turn: the editor keeps answering keystrokes in between.
    await new Promise((resolve) => setImmediate(resolve));
  }
  files.sort((a, b) => (a.path < b.path ? -1 : a.path > b.path ? 1 : 0));
  lintHosts(files.flatMap((f) => (f.report ? [{ path: f.path, machines: f.report.machines, findings: f.report.findings }] : [])), mapping);
  return files;
}

/** Runs the review against `revision` for the workspace folder of `state`; throws ReviewError with a message for the user. */
async function review(state: MappingState & { mapping: Mapping }, revision: string, traces: ReviewTraces | undefined): Promise<string> {
  const head = state.mapping;
  const mappingText = await readText(state.uri);
  if (mappingText === undefined) throw new ReviewError(`${state.uri.fsPath}: the mapping file cannot be read`);
  const extracted = await extractRevision(revision, head.dir);
  if (!extracted.ok) throw new ReviewError(extracted.error);
  try {
    // The workspace's mapping file, placed in the base tree where it sits in the work tree (as the CLI does).
    const base = loadMapping(mappingText, nodePath.join(extracted.value.baseDir, nodePath.basename(head.path)));
    if (!base.mapping) throw new ReviewError(`${state.uri.fsPath}: ${base.problems[0]?.message ?? 'the mapping file has problems'}`);
    const limit = readSettings(state.uri).fileSizeLimit;
    const baseFiles = await lintSide(base.mapping, limit, traces?.base);
    const headFiles = await lintSide(head, limit, traces?.head);
    const comparison = compareRuns(reviewedFiles(base.mapping.dir, baseFiles), reviewedFiles(head.dir, headFiles), head.hosts);
    // Links open the head's files in the editor.
    return renderCompareMarkdown({ comparison, baseLabel: revision }, { linkBase: `${vscode.Uri.file(head.dir).toString()}/` });
  } finally {
    // The review's measuring threads are stopped before the base's files go.
    traces?.dispose();
    extracted.value.remove();
  }
}

/** The mapping file to review: the active definition's, else the first workspace folder's. */
function chooseMapping(states: readonly MappingState[]): (MappingState & { mapping: Mapping }) | undefined {
  const usable = states.filter((s): s is MappingState & { mapping: Mapping } => s.mapping !== undefined);
  const active = vscode.window.activeTextEditor?.document.uri;
  return (active ? usable.find((s) => s.mapping.includes(active.fsPath) || s.uri.toString() === active.toString()) : undefined) ?? usable[0];
}

/** The trace caches a review reads (see Linting.reviewTraces); `dispose` stops those made for it. */
export interface ReviewTraces {
  head: TraceCurveCache;
  base: TraceCurveCache;
  dispose(): void;
}

export async function compareWithRevision(states: readonly MappingState[], documents: ReviewDocuments, request: CompareRequest = {}, traces?: () => ReviewTraces | undefined): Promise<CompareResult> {
  const showFailure = (error: string): CompareResult => {
    void vscode.window.showErrorMessage(`cachewright: ${error}`);
    return { ok: false, error };
  };
  const state = chooseMapping(states);
  if (!state) return showFailure('no usable mapping file (cachewright.yaml or cachewright.json) at the root of a workspace folder, so there is nothing to compare.');
  try {
    const revision = request.revision ?? (await pickRevision(state.mapping.dir));
    if (revision === undefined) return { ok: false, error: 'no revision chosen' };
    const markdown = await vscode.window.withProgress(
      { location: vscode.ProgressLocation.Notification, title: `cachewright: comparing the workspace with ${revision}` },
      () => review(state, revision, traces?.()),
    );
    const uri = documents.add(revision, markdown);
    // Beside the editor, which keeps the focus: the summary next to the edits it reviews.
    await vscode.commands.executeCommand('markdown.showPreviewToSide', uri);
    return { ok: true, revision, uri, markdown };
  } catch (error) {
    if (error instanceof ReviewError) return showFailure(error.message);
    throw error;
  }
}
