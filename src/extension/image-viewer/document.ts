// One open qcow2 image: its path, the inspection running on it and the webviews showing it. The
// file is only ever read (the reader opens it with 'r'); there is nothing here that could save it.
import { statSync } from 'node:fs';
import * as path from 'node:path';
import * as vscode from 'vscode';
import { inspectImage, readChain, type ImageReport, type InspectProgress } from '../../image';
import { layerReport } from '../../image/report';
import { driverProfile, type DriverProfile } from '../../core/profiles';
import { buildImageView, finalState } from './model';
import type { DrawnSummary, ImageView, ProfileChoice, ViewState, WalkProgressView } from '../../protocol/image-viewer';

/** Progress reaches the webview at most this often; the walk itself reports more often. */
const PROGRESS_EVERY_MS = 100;
/** Walks that finish sooner never raise a notification. */
const NOTIFY_AFTER_MS = 400;

export interface DocumentListener {
  view(view: ImageView): void;
  progress(seq: number, progress: WalkProgressView): void;
}

export class ImageDocument implements vscode.CustomDocument {
  readonly path: string;
  readonly fileName: string;
  private readonly listeners = new Set<DocumentListener>();
  private readonly disposed = new vscode.EventEmitter<void>();
  readonly onDidDispose = this.disposed.event;
  private seq = 0;
  private reports: ImageReport[] = [];
  private state: ViewState = 'reading';
  private note: string | undefined;
  private progress: WalkProgressView | null = null;
  private abort: AbortController | undefined;
  private running: Promise<void> | undefined;
  private lastProgressPost = 0;
  private stopAtFirstProgress = false;
  private changedOnDisk: 'changed' | 'deleted' | null = null;
  /** The file's modification time and size when the last read began: a watcher event that finds
   *  both unchanged is a late echo of how the file came to be (its creation), not a new write. */
  private readStamp: string | undefined;
  private profile: DriverProfile = driverProfile();
  private readonly watcher: vscode.FileSystemWatcher | undefined;
  current: ImageView;
  lastDrawn: { view: ImageView; drawn: DrawnSummary } | undefined;
  viewsPosted = 0;
  progressReports = 0;

  constructor(readonly uri: vscode.Uri) {
    this.path = uri.fsPath;
    this.fileName = path.basename(uri.fsPath);
    this.current = this.build();
    if (uri.scheme === 'file') {
      // A running VM may be writing the image: say so, rather than show numbers as if they were current.
      this.watcher = vscode.workspace.createFileSystemWatcher(new vscode.RelativePattern(vscode.Uri.file(path.dirname(this.path)), this.fileName));
      this.watcher.onDidChange(() => this.fileChanged('changed'));
      this.watcher.onDidCreate(() => this.fileChanged('changed'));
      this.watcher.onDidDelete(() => this.fileChanged('deleted'));
    }
  }

  private fileChanged(how: 'changed' | 'deleted'): void {
    if (how === 'changed' && this.readStamp !== undefined && stampOf(this.path) === this.readStamp) return;
    this.changedOnDisk = how;
    this.publish(this.state);
  }

  listen(listener: DocumentListener): vscode.Disposable {
    this.listeners.add(listener);
    return new vscode.Disposable(() => this.listeners.delete(listener));
  }

  get reading(): boolean {
    return this.running !== undefined;
  }

  /** Tests: the next walk stops itself at its first progress report, so a stop lands mid-walk. */
  armStopAtFirstProgress(): void {
    this.stopAtFirstProgress = true;
  }

  /** Starts reading unless a read is running; resolves when it ends. */
  read(): Promise<void> {
    if (this.running) return this.running;
    if (!vscode.workspace.isTrusted) {
      this.reports = [];
      this.publish('untrusted');
      return Promise.resolve();
    }
    if (this.uri.scheme !== 'file') {
      this.reports = [];
      this.note = `cachewright reads images from local files only; ${this.uri.toString()} is not one.`;
      this.publish('failed');
      return Promise.resolve();
    }
    const abort = new AbortController();
    this.abort = abort;
    this.changedOnDisk = null;
    this.readStamp = stampOf(this.path);
    this.note = undefined;
    this.progress = null;
    const run = this.inspect(abort.signal).finally(() => {
      if (this.abort === abort) this.abort = undefined;
      this.running = undefined;
    });
    this.running = run;
    this.notifyIfSlow(run, abort);
    return run;
  }

  stop(): void {
    this.abort?.abort();
  }

  /** The driver-default profile changes the caches only: recomputed from the reports, nothing is reread. */
  setProfile(choice: ProfileChoice): void {
    this.profile = driverProfile(choice.generation, choice.platform);
    this.publish(this.state);
  }

  async reread(): Promise<void> {
    if (this.running) {
      this.stop();
      await this.running;
    }
    await this.read();
  }

  private async inspect(signal: AbortSignal): Promise<void> {
    try {
      // Headers first (a few small reads): the facts and the chain show while the tables are walked.
      const headers = await readChain(this.path, { signal });
      this.reports = headers.map((layer) => layerReport(layer, undefined));
      if (signal.aborted) return this.publish('cancelled');
      this.publish('reading');

      const report = await inspectImage(this.path, {
        signal,
        onProgress: (p) => this.onProgress(p),
      });
      const { chain, ...top } = report;
      this.reports = [{ ...top, chain: [] }, ...chain];
      this.publish(finalState(this.reports));
    } catch (error) {
      // The reader reports bad files in the report; anything thrown is a fault of ours, shown plainly.
      this.note = `cachewright could not finish reading this image: ${error instanceof Error ? error.message : String(error)}`;
      this.publish('failed');
    }
  }

  private onProgress(p: InspectProgress): void {
    this.progressReports++;
    this.progress = { layer: p.layer, path: p.path, l1Done: p.l1Done, l1Total: p.l1Total, l2TablesRead: p.l2TablesRead };
    if (this.stopAtFirstProgress && p.l1Done < p.l1Total) {
      this.stopAtFirstProgress = false;
      this.stop();
    }
    const now = Date.now();
    if (now - this.lastProgressPost < PROGRESS_EVERY_MS) return;
    this.lastProgressPost = now;
    this.current = { ...this.current, progress: this.progress };
    for (const listener of this.listeners) listener.progress(this.current.seq, this.progress);
  }

  /** A notification with a cancel button, only for walks long enough to need one. */
  private notifyIfSlow(run: Promise<void>, abort: AbortController): void {
    let finished = false;
    void run.then(() => { finished = true; });
    setTimeout(() => {
      if (finished || abort.signal.aborted) return;
      void vscode.window.withProgress(
        { location: vscode.ProgressLocation.Notification, title: `cachewright: reading ${this.fileName}`, cancellable: true },
        async (reporter, token) => {
          token.onCancellationRequested(() => abort.abort());
          let shown = 0;
          const timer = setInterval(() => {
            const p = this.progress;
            if (!p) return;
            const share = p.l1Total === 0 ? 100 : Math.floor((p.l1Done / p.l1Total) * 100);
            const layer = p.layer > 0 ? ` of backing layer ${p.layer}` : '';
            reporter.report({ increment: Math.max(0, share - shown), message: `${share}% of the L1 table${layer}, ${p.l2TablesRead.toLocaleString('en-US')} L2 tables` });
            shown = Math.max(shown, share);
          }, 250);
          try {
            await run;
          } finally {
            clearInterval(timer);
          }
        },
      );
    }, NOTIFY_AFTER_MS);
  }

  private build(state: ViewState = this.state): ImageView {
    return buildImageView({
      seq: this.seq,
      uri: this.uri.toString(),
      path: this.path,
      fileName: this.fileName,
      layers: this.reports,
      state,
      progress: this.progress,
      changedOnDisk: this.changedOnDisk,
      profile: this.profile,
      note: this.note,
    });
  }

  private publish(state: ViewState): void {
    this.state = state;
    this.seq++;
    this.current = this.build(state);
    this.viewsPosted++;
    for (const listener of this.listeners) listener.view(this.current);
  }

  dispose(): void {
    this.stop();
    this.watcher?.dispose();
    this.listeners.clear();
    this.disposed.fire();
    this.disposed.dispose();
  }
}

function stampOf(file: string): string | undefined {
  try {
    const stat = statSync(file, { bigint: true });
    return `${stat.mtimeNs}:${stat.size}`;
  } catch {
    return undefined;
  }
}
