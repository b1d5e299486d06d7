// The extension's settings, read in one place. Per-rule severities here override the mapping file's.
import * as vscode from 'vscode';
import type { Severity } from '../core/results';
import { parseShare, parseSize } from '../core/units';
import { checkSampleRate } from '../trace/measure';
import { DEFINITION_SIZE_LIMIT, MAX_FILE_SIZE_LIMIT } from '../files/open';
import { isOneOf } from '../core/guards';

export type SeveritySetting = Severity | 'off';
const SEVERITIES: readonly SeveritySetting[] = ['error', 'warning', 'info', 'off'];

export interface Settings {
  enable: boolean;
  /** Relative to the workspace folder; empty when the folder's root is searched. */
  mappingFile: string;
  rules: Record<string, SeveritySetting>;
  debounceMs: number;
  /** Definition files above this many bytes are not linted (the setting, else the default). */
  fileSizeLimit: number;
  /** The share of cache entries counted when a trace is measured (1: every lookup). */
  traceSampleRate: number;
}

/** The traceSampleRate setting: a share the trace reader accepts as a sample rate; anything else counts every lookup. */
function sampleRate(raw: unknown): number {
  const share = parseShare(raw);
  const rate = share.ok ? checkSampleRate(share.value) : share;
  return rate.ok ? rate.value : 1;
}

/** The fileSizeLimit setting in bytes: a size as the mapping file writes them; anything unreadable keeps the default. */
function sizeLimit(raw: unknown): number {
  const size = parseSize(raw);
  return size.ok && size.value >= 1n && size.value <= BigInt(MAX_FILE_SIZE_LIMIT) ? Number(size.value) : DEFINITION_SIZE_LIMIT;
}

export const SECTION = 'cachewright';

export function readSettings(scope?: vscode.Uri): Settings {
  const config = vscode.workspace.getConfiguration(SECTION, scope);
  const rules: Record<string, SeveritySetting> = {};
  const rawRules = config.get<unknown>('rules');
  if (rawRules && typeof rawRules === 'object') {
    for (const [rule, severity] of Object.entries(rawRules)) {
      if (isOneOf(SEVERITIES, severity)) rules[rule] = severity;
    }
  }
  const debounce = config.get<number>('debounceMs', 200);
  // A mapping path from an untrusted workspace's settings could point anywhere: ignore it there.
  const mappingFile = vscode.workspace.isTrusted ? config.get<string>('mappingFile', '') : '';
  return {
    enable: config.get<boolean>('enable', true),
    mappingFile: mappingFile.trim(),
    rules,
    debounceMs: Number.isFinite(debounce) && debounce >= 0 ? Math.min(debounce, 5000) : 200,
    fileSizeLimit: sizeLimit(config.get<unknown>('fileSizeLimit', '32M')),
    traceSampleRate: sampleRate(config.get<unknown>('traceSampleRate', 1)),
  };
}
