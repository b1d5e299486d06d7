// Hosts the sizing panel's webview beside the editor: a strict content security policy (the
// extension's own resources only, scripts with a nonce), and the typed protocol for every message.
import * as vscode from 'vscode';
import { webviewHtml } from './webview-page';
import {
  decodePanelMessage, encodeMessage, type HostMessage, type PanelView, type WhatIfValues,
} from '../protocol/panel';
import type { SourceRange } from '../core/results';

export interface PanelHandlers {
  reveal(uri: vscode.Uri, range: SourceRange): void;
  apply(uri: vscode.Uri, version: number, pointer: string, values: WhatIfValues): Promise<{ ok: boolean; message: string }>;
  /** The webview is ready for a view (first open, or after it was reloaded). */
  ready(): void;
}

interface RenderWaiter { seq: number; resolve: (disks: number) => void }

export class SizingPanel implements vscode.Disposable {
  static readonly viewType = 'cachewright.sizingPanel';
  private panel: vscode.WebviewPanel | undefined;
  private seq = 0;
  private readonly waiters: RenderWaiter[] = [];
  private readonly disposables: vscode.Disposable[] = [];
  /** When each view was posted, for the panel-update timing. */
  private readonly postedAt = new Map<number, number>();
  lastRender: { seq: number; disks: number; ms: number } | undefined;
  shownUri: string | undefined;

  constructor(private readonly extensionUri: vscode.Uri, private readonly handlers: PanelHandlers) {}

  get visible(): boolean {
    return this.panel !== undefined;
  }

  open(preserveFocus = true): void {
    if (this.panel) {
      this.panel.reveal(vscode.ViewColumn.Beside, preserveFocus);
      return;
    }
    const roots = [vscode.Uri.joinPath(this.extensionUri, 'dist'), vscode.Uri.joinPath(this.extensionUri, 'media')];
    const panel = vscode.window.createWebviewPanel(SizingPanel.viewType, 'cachewright: cache sizing',
      { viewColumn: vscode.ViewColumn.Beside, preserveFocus },
      { enableScripts: true, localResourceRoots: roots, retainContextWhenHidden: true });
    panel.iconPath = vscode.Uri.joinPath(this.extensionUri, 'media', 'panel-icon.svg');
    panel.webview.html = this.html(panel.webview);
    panel.webview.onDidReceiveMessage((raw: unknown) => this.receive(raw), undefined, this.disposables);
    panel.onDidDispose(() => {
      this.panel = undefined;
      this.shownUri = undefined;
      this.postedAt.clear();
      // Nothing will draw them now: whoever waits for a drawing gets "no disks drawn".
      for (const waiter of this.waiters.splice(0)) waiter.resolve(0);
    }, undefined, this.disposables);
    this.panel = panel;
  }

  show(view: PanelView): Promise<number> {
    this.shownUri = view.uri;
    return this.post({ type: 'show', seq: ++this.seq, view });
  }

  empty(reason: string): Promise<number> {
    this.shownUri = undefined;
    return this.post({ type: 'empty', seq: ++this.seq, reason });
  }

  focusDisk(pointer: string): void {
    if (this.panel) void this.panel.webview.postMessage(encodeMessage({ type: 'focusDisk', pointer }));
  }

  /** Resolves with the disk count once the webview has drawn this view. */
  private post(message: Extract<HostMessage, { seq: number }>): Promise<number> {
    if (!this.panel) return Promise.resolve(0);
    this.postedAt.set(message.seq, Date.now());
    const drawn = new Promise<number>((resolve) => this.waiters.push({ seq: message.seq, resolve }));
    void this.panel.webview.postMessage(encodeMessage(message));
    return drawn;
  }

  private receive(raw: unknown): void {
    const message = decodePanelMessage(raw);
    if (!message) return;
    switch (message.type) {
      case 'ready':
        this.handlers.ready();
        break;
      case 'rendered': {
        const posted = this.postedAt.get(message.seq);
        for (const seq of [...this.postedAt.keys()]) if (seq <= message.seq) this.postedAt.delete(seq);
        if (posted !== undefined) this.lastRender = { seq: message.seq, disks: message.disks, ms: Date.now() - posted };
        // Views superseded before they were drawn resolve too: the newest drawing answers for them.
        for (let i = this.waiters.length - 1; i >= 0; i--) {
          const waiter = this.waiters[i];
          if (waiter && waiter.seq <= message.seq) {
            this.waiters.splice(i, 1);
            waiter.resolve(message.disks);
          }
        }
        break;
      }
      case 'reveal':
        this.handlers.reveal(vscode.Uri.parse(message.uri), message.range);
        break;
      case 'applyWhatIf':
        void this.handlers.apply(vscode.Uri.parse(message.uri), message.version, message.pointer, message.values).then((outcome) => {
          if (this.panel) void this.panel.webview.postMessage(encodeMessage({ type: 'applied', ...outcome }));
        });
        break;
    }
  }

  private html(webview: vscode.Webview): string {
    return webviewHtml(webview, this.extensionUri, {
      script: 'webview.js',
      style: 'panel.css',
      title: 'cachewright: cache sizing',
      body: '<div id="root"><p class="none">Reading the definition…</p></div>',
      styleNonce: true,
    });
  }

  dispose(): void {
    this.panel?.dispose();
    for (const d of this.disposables) d.dispose();
    for (const waiter of this.waiters.splice(0)) waiter.resolve(0);
  }
}
