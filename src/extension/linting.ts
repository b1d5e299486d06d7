// Keeps every included definition's lint result current: open documents as the user types
// (debounced), the rest of the workspace in the background and through a file watcher, and the
// mapping files themselves, whose own problems show at their positions.
import * as path from 'node:path';
import * as vscode from 'vscode';
import { LintSession, oversizedFileReport, type FileReport, type Mapping } from '../lint';
import { ImageFactsCache } from '../image/facts-cache';
import { TraceCurveCache, type RunningTraceJob } from './traces';
import type { ReviewTraces } from './compare-revision';
import { fileDiagnostics, mappingDiagnostics } from './diagnostics';
import { isMappingFileName, Mappings, readDefinitionText } from './mappings';
import { readSettings } from './settings';
import { WorkspaceHosts } from './workspace-hosts';
import { includedFiles } from './included-files';

export interface LintResult {
  uri: vscode.Uri;
  /** The document version linted; undefined when linted from disk. */
  version: number | undefined;
  text: string;
  report: FileReport;
  mapping: Mapping;
}

export interface Timings {
  activatedAt: number;
  /** Milliseconds from activation until the mapping files were loaded. */
  mappingsLoadedMs?: number;
  /** Milliseconds from activation to the first diagnostics published for a definition. */
  firstDiagnosticsMs?: number;
  /** Lint time of the most recent document lint. */
  lastLintMs?: number;
}

const DEFINITION_LANGUAGES = new Set(['yaml', 'json', 'jsonc']);
/** A trace measured for longer than this shows a progress notification (with a cancel button). */
const TRACE_PROGRESS_AFTER_MS = 700;

export class Linting implements vscode.Disposable {
  readonly diagnostics = vscode.languages.createDiagnosticCollection('cachewright');
  readonly mappings = new Mappings();
  private readonly results = new Map<string, LintResult>();
  private readonly sessions = new Map<string, { session: LintSession; severities: string; images: ImageFactsCache | undefined; traces: TraceCurveCache | undefined }>();
  private readonly timers = new Map<string, NodeJS.Timeout>();
  private readonly emitter = new vscode.EventEmitter<LintResult>();
  /** Fires after a definition was linted (from an editor or from disk). */
  readonly onDidLint = this.emitter.event;
  private readonly mappingEmitter = new vscode.EventEmitter<void>();
  /** Fires after the mapping files were reloaded. */
  readonly onDidReloadMappings = this.mappingEmitter.event;
  private readonly disposables: vscode.Disposable[] = [];
  /** Files above the size limit whose user has been told so (once per file and session). */
  private readonly toldTooLarge = new Set<string>();

  /** Image facts for the image rules; only in a trusted workspace (untrusted: the text alone). */
  private images = vscode.workspace.isTrusted ? new ImageFactsCache({ recheck: true }) : undefined;
  /** Measured curves of the traces disks name; like images, only in a trusted workspace. */
  private traceCurves: TraceCurveCache | undefined;

  /** The cross-file host rule over every definition's latest report, a moment after each lint. */
  readonly hosts = new WorkspaceHosts({ results: () => this.results.values(), republish: (uri) => this.show(uri) });

  constructor(private readonly extensionUri: vscode.Uri, readonly timings: Timings) {
    if (vscode.workspace.isTrusted) this.traceCurves = this.newTraceCache();
  }

  private newTraceCache(): TraceCurveCache {
    return new TraceCurveCache(this.traceWorkerScript(), (job) => this.showTraceJob(job), readSettings().traceSampleRate);
  }

  private traceWorkerScript(): string {
    return vscode.Uri.joinPath(this.extensionUri, 'dist', 'trace-worker.js').fsPath;
  }

  /** A long measurement shows its progress and can be cancelled; a short one passes unseen. */
  private showTraceJob(job: RunningTraceJob): void {
    let done = 0;
    job.onProgress((share) => (done = share));
    const timer = setTimeout(() => {
      const names = job.paths.map((p) => path.basename(p)).join(', ');
      void vscode.window.withProgress({ location: vscode.ProgressLocation.Notification, title: `cachewright: measuring the trace ${names}`, cancellable: true }, (progress, token) => {
        token.onCancellationRequested(() => job.cancel());
        let shown = 0;
        const report = (share: number): void => {
          const percent = Math.floor(share * 100);
          if (percent <= shown) return;
          progress.report({ increment: percent - shown, message: `${percent} % read` });
          shown = percent;
        };
        report(done);
        job.onProgress(report);
        return job.finished;
      });
    }, TRACE_PROGRESS_AFTER_MS);
    void job.finished.then(() => clearTimeout(timer));
  }

  /**
   * The measured curves for a review against a revision, as `cachewright compare` reads them: every
   * lookup counted, whatever cachewright.traceSampleRate says. The workspace's own curves serve the
   * head when they are exact (already measured for the open files); the caches made for the review
   * go with its dispose. None in an untrusted workspace, where the editor reads no traces.
   */
  reviewTraces(): ReviewTraces | undefined {
    if (!this.traceCurves) return undefined;
    const exact = (): TraceCurveCache => new TraceCurveCache(this.traceWorkerScript(), () => undefined, 1);
    const head = this.traceCurves.sampleRate === 1 ? this.traceCurves : exact();
    const base = exact();
    return {
      head,
      base,
      dispose: () => {
        base.dispose();
        if (head !== this.traceCurves) head.dispose();
      },
    };
  }

  /** Traces whose measuring was cancelled or stopped are measured again on the next lint. */
  forgetUnfinishedTraces(): void {
    this.traceCurves?.forgetUnfinished();
  }

  private get enabled(): boolean {
    return readSettings().enable;
  }

  /** Loads the mapping files, lints the open definitions, then the whole workspace in the background. */
  async start(): Promise<void> {
    await this.reloadMappings();
    this.timings.mappingsLoadedMs = Date.now() - this.timings.activatedAt;
    this.disposables.push(
      vscode.workspace.onDidChangeTextDocument((event) => this.schedule(event.document)),
      vscode.workspace.onDidOpenTextDocument((document) => { if (this.isDefinition(document)) this.lintOpen(document); }),
      // Closed without saving: the diagnostics follow the file on disk again.
      vscode.workspace.onDidCloseTextDocument((document) => {
        this.sessions.delete(document.uri.toString());
        if (this.results.get(document.uri.toString())?.version !== undefined) setTimeout(() => void this.lintFromDisk(document.uri), 0);
      }),
      vscode.workspace.onDidSaveTextDocument((document) => {
        if (isMappingFileName(document.uri) || this.mappings.stateOfMappingFile(document.uri)) void this.mappingChanged(document.uri);
      }),
      vscode.workspace.onDidChangeConfiguration((event) => {
        // Curves measured at another rate are not what the setting asks for: measure again.
        if (event.affectsConfiguration('cachewright.traceSampleRate') && this.traceCurves) {
          this.traceCurves.dispose();
          this.traceCurves = this.newTraceCache();
        }
        if (event.affectsConfiguration('cachewright')) void this.reloadMappings().then(() => this.lintWorkspace(false));
      }),
      vscode.workspace.onDidChangeWorkspaceFolders(() => void this.reloadMappings().then(() => this.lintWorkspace(false))),
      vscode.workspace.onDidGrantWorkspaceTrust(() => {
        this.images = new ImageFactsCache({ recheck: true });
        this.traceCurves = this.newTraceCache();
        void this.lintWorkspace(false);
      }),
      this.watch(),
    );
    // What the user is looking at first, then everything else behind a progress notification.
    for (const document of vscode.workspace.textDocuments) if (this.isDefinition(document)) this.lintOpen(document);
    void this.lintWorkspace(true);
  }

  result(uri: vscode.Uri): LintResult | undefined {
    return this.results.get(uri.toString());
  }

  /** The result for the document's current text, linting now if the stored one is stale. */
  fresh(document: vscode.TextDocument): LintResult | undefined {
    const stored = this.results.get(document.uri.toString());
    if (stored && stored.version === document.version) return stored;
    return this.lintOpen(document);
  }

  isDefinition(document: vscode.TextDocument): boolean {
    return this.enabled && DEFINITION_LANGUAGES.has(document.languageId) && this.mappings.mappingFor(document.uri) !== undefined;
  }

  private schedule(document: vscode.TextDocument, delay = readSettings(document.uri).debounceMs): void {
    if (!this.enabled || document.uri.scheme !== 'file') return;
    const key = document.uri.toString();
    const pending = this.timers.get(key);
    if (pending) clearTimeout(pending);
    const run = (): void => {
      this.timers.delete(key);
      if (this.mappings.stateOfMappingFile(document.uri) || isMappingFileName(document.uri)) {
        void this.mappingChanged(document.uri, document.getText());
      } else if (this.isDefinition(document)) {
        this.lintOpen(document);
      }
    };
    if (delay <= 0) run();
    else this.timers.set(key, setTimeout(run, delay));
  }

  private lintOpen(document: vscode.TextDocument): LintResult | undefined {
    const mapping = this.mappings.mappingFor(document.uri);
    if (!mapping || !DEFINITION_LANGUAGES.has(document.languageId)) return undefined;
    return this.lint(document.uri, document.getText(), document.version, mapping);
  }

  /** One session per file: an edit inside one disk re-checks that disk alone (same report as a full lint). */
  private sessionFor(uri: vscode.Uri, mapping: Mapping): LintSession {
    const key = uri.toString();
    const severities = readSettings(uri).rules;
    const existing = this.sessions.get(key);
    if (existing && existing.session.mapping === mapping && existing.severities === JSON.stringify(severities) && existing.images === this.images && existing.traces === this.traceCurves) return existing.session;
    const session = new LintSession(uri.fsPath, mapping, { severities, images: this.images?.lookup, traces: this.traceCurves?.lookup });
    this.sessions.set(key, { session, severities: JSON.stringify(severities), images: this.images, traces: this.traceCurves });
    return session;
  }

  private lint(uri: vscode.Uri, text: string, version: number | undefined, mapping: Mapping, factsChanged = false): LintResult {
    const limit = readSettings(uri).fileSizeLimit;
    // UTF-16 length <= UTF-8 bytes <= 3 x length: count the bytes only near the limit.
    if (text.length > limit || (text.length * 3 > limit && Buffer.byteLength(text, 'utf8') > limit)) return this.tooLarge(uri, Buffer.byteLength(text, 'utf8'), limit, version, mapping);
    const started = Date.now();
    const session = this.sessionFor(uri, mapping);
    if (factsChanged) session.reset();
    const images = this.images;
    const traces = this.traceCurves;
    const report = session.update(text);
    this.timings.lastLintMs = Date.now() - started;
    // Images named for the first time, or whose files changed, are read in the background, and traces
    // are measured in a worker thread; then the text is linted again with their facts, if it is still
    // the text the editor holds.
    const relint = (changed: boolean): void => {
      const current = this.results.get(uri.toString());
      if (!changed || !current || current.version !== version || current.text !== text) return;
      this.lint(uri, text, version, mapping, true);
      // Files on disk keep no session (see lintFromDisk).
      if (version === undefined) this.sessions.delete(uri.toString());
    };
    const imagePaths = images ? session.imagePaths() : [];
    if (images && imagePaths.length > 0) void images.load(imagePaths).then(relint, () => undefined);
    const traceRequests = traces ? session.traceRequests() : [];
    if (traces && traceRequests.length > 0) void traces.load(traceRequests).then(relint, () => undefined);
    const result: LintResult = { uri, version, text, report, mapping };
    this.results.set(uri.toString(), result);
    this.publish(uri);
    if (this.timings.firstDiagnosticsMs === undefined) this.timings.firstDiagnosticsMs = Date.now() - this.timings.activatedAt;
    this.emitter.fire(result);
    return result;
  }

  /**
   * A definition above the size limit is not linted (the document model would need many times its
   * size): one error at its start says why, and the user is told once.
   */
  private tooLarge(uri: vscode.Uri, bytes: number, limit: number, version: number | undefined, mapping: Mapping): LintResult {
    this.sessions.delete(uri.toString());
    const report = oversizedFileReport(uri.fsPath, BigInt(bytes), BigInt(limit), 'raise the cachewright.fileSizeLimit setting to lint it');
    const result: LintResult = { uri, version, text: '', report, mapping };
    this.results.set(uri.toString(), result);
    this.publish(uri);
    // Said once per file while it is open in an editor; files only on disk carry the error alone.
    if (version !== undefined && !this.toldTooLarge.has(uri.toString())) {
      this.toldTooLarge.add(uri.toString());
      void vscode.window.showWarningMessage(`cachewright: ${report.findings[0]?.message ?? ''}.`);
    }
    this.emitter.fire(result);
    return result;
  }

  private async lintFromDisk(uri: vscode.Uri): Promise<void> {
    const mapping = this.mappings.mappingFor(uri);
    if (!mapping) return;
    const open = vscode.workspace.textDocuments.find((d) => d.uri.toString() === uri.toString());
    if (open) {
      this.lintOpen(open);
      return;
    }
    const limit = readSettings(uri).fileSizeLimit;
    const read = await readDefinitionText(uri, limit);
    if (read === undefined) return;
    if ('tooLarge' in read) {
      this.tooLarge(uri, read.tooLarge, limit, undefined, mapping);
      return;
    }
    // Files on disk are linted once; only open editors keep a session (and its parsed tree).
    this.sessions.delete(uri.toString());
    this.lint(uri, read.text, undefined, mapping);
    this.sessions.delete(uri.toString());
  }

  /** A file was linted: its diagnostics now, and a host pass soon. */
  private publish(uri: vscode.Uri): void {
    this.show(uri);
    this.hosts.schedule();
  }

  /** The file's own findings and the host findings placed in it, as diagnostics. */
  private show(uri: vscode.Uri): void {
    const result = this.results.get(uri.toString());
    if (result) this.diagnostics.set(uri, fileDiagnostics(this.extensionUri, uri, [...result.report.findings, ...this.hosts.findingsFor(uri, result.report)]));
  }

  async reloadMappings(): Promise<void> {
    const states = await this.mappings.reloadAll();
    for (const state of states) this.diagnostics.set(state.uri, mappingDiagnostics(state.problems));
    // Results under a mapping that no longer includes them are dropped with their diagnostics.
    for (const [key, result] of [...this.results]) {
      if (!this.mappings.mappingFor(result.uri)) {
        this.results.delete(key);
        this.diagnostics.delete(result.uri);
      }
    }
    this.hosts.schedule();
    this.mappingEmitter.fire();
  }

  private async mappingChanged(uri: vscode.Uri, text?: string): Promise<void> {
    const known = this.mappings.stateOfMappingFile(uri);
    if (!known) {
      // A new mapping file at a folder's root: take it up.
      await this.reloadMappings();
      await this.lintWorkspace(false);
      return;
    }
    const state = await this.mappings.reload(uri, text);
    if (!state) return;
    this.diagnostics.set(state.uri, mappingDiagnostics(state.problems));
    if (!state.mapping) return; // keep the last good results while the mapping file is broken
    this.mappingEmitter.fire();
    await this.lintWorkspace(false);
  }

  /** Every file the mapping files include; with `progress`, behind a notification. */
  async lintWorkspace(progress: boolean): Promise<{ files: number; findings: number }> {
    if (!this.enabled) {
      this.diagnostics.clear();
      return { files: 0, findings: 0 };
    }
    const run = async (report?: vscode.Progress<{ message?: string; increment?: number }>): Promise<{ files: number; findings: number }> => {
      const files = await this.includedFiles();
      let findings = 0;
      let done = 0;
      for (const uri of files) {
        await this.lintFromDisk(uri);
        findings += this.results.get(uri.toString())?.report.findings.filter((f) => !f.accepted).length ?? 0;
        done++;
        report?.report({ message: `${done} of ${files.length} definitions`, increment: 100 / Math.max(files.length, 1) });
      }
      return { files: files.length, findings };
    };
    if (!progress) return run();
    return vscode.window.withProgress({ location: vscode.ProgressLocation.Notification, title: 'cachewright: linting definitions' }, run);
  }

  private async includedFiles(): Promise<vscode.Uri[]> {
    const found = new Map<string, vscode.Uri>();
    for (const state of this.mappings.all()) {
      if (!state.mapping) continue;
      for (const uri of await includedFiles(state.mapping)) found.set(uri.toString(), uri);
    }
    return [...found.values()].sort((a, b) => a.fsPath.localeCompare(b.fsPath));
  }

  private watch(): vscode.Disposable {
    const watcher = vscode.workspace.createFileSystemWatcher('**/*.{yaml,yml,json}');
    const changed = (uri: vscode.Uri): void => {
      if (!this.enabled) return;
      if (this.mappings.stateOfMappingFile(uri) || isMappingFileName(uri)) {
        const open = vscode.workspace.textDocuments.find((d) => d.uri.toString() === uri.toString());
        if (!open?.isDirty) void this.mappingChanged(uri);
        return;
      }
      // Open documents follow their editor's text, not the disk.
      if (vscode.workspace.textDocuments.some((d) => d.uri.toString() === uri.toString())) return;
      if (this.mappings.mappingFor(uri)) void this.lintFromDisk(uri);
    };
    watcher.onDidChange(changed);
    watcher.onDidCreate(changed);
    watcher.onDidDelete((uri) => {
      if (this.mappings.stateOfMappingFile(uri)) {
        this.diagnostics.delete(uri);
        void this.reloadMappings();
        return;
      }
      this.results.delete(uri.toString());
      this.diagnostics.delete(uri);
      this.hosts.schedule();
    });
    return watcher;
  }

  dispose(): void {
    for (const timer of this.timers.values()) clearTimeout(timer);
    this.traceCurves?.dispose();
    for (const d of this.disposables) d.dispose();
    this.hosts.dispose();
    this.diagnostics.dispose();
    this.emitter.dispose();
    this.mappingEmitter.dispose();
  }
}
