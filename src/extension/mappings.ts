// Finds each workspace folder's mapping file and keeps it loaded: from the open editor's text while
// it is being edited (so its errors show as the user types), from disk otherwise.
import { promises as fs } from 'node:fs';
import * as path from 'node:path';
import * as vscode from 'vscode';
import { loadMapping, type Mapping, type MappingProblem } from '../lint';
import { FileReadError, MAPPING_SIZE_LIMIT, readRegularText } from '../files/open';
import { MAPPING_FILE_NAMES } from '../model/mapping';
import { readSettings } from './settings';
import { isOneOf } from '../core/guards';

export interface MappingState {
  folder: vscode.WorkspaceFolder;
  uri: vscode.Uri;
  mapping?: Mapping;
  problems: MappingProblem[];
}

// Definitions live on the extension host's own disk (scheme file): read them directly, which is
// several times faster than a round trip through the editor's file service at start-up.
async function exists(uri: vscode.Uri): Promise<boolean> {
  try {
    if (uri.scheme === 'file') return (await fs.stat(uri.fsPath)).isFile();
    await vscode.workspace.fs.stat(uri);
    return true;
  } catch {
    return false;
  }
}

/** The mapping file a folder uses: the configured path, else the first standard name at its root. */
export async function mappingFileOfFolder(folder: vscode.WorkspaceFolder): Promise<vscode.Uri | undefined> {
  const configured = readSettings(folder.uri).mappingFile;
  if (configured) {
    const uri = path.isAbsolute(configured) ? vscode.Uri.file(configured) : vscode.Uri.joinPath(folder.uri, configured);
    return (await exists(uri)) ? uri : undefined;
  }
  for (const name of MAPPING_FILE_NAMES) {
    const uri = vscode.Uri.joinPath(folder.uri, name);
    if (await exists(uri)) return uri;
  }
  return undefined;
}

export async function readText(uri: vscode.Uri): Promise<string | undefined> {
  const open = vscode.workspace.textDocuments.find((d) => d.uri.toString() === uri.toString());
  if (open) return open.getText();
  try {
    // Checked for its type first: a named pipe in the workspace must not hang the extension host.
    if (uri.scheme === 'file') return readRegularText(uri.fsPath, { maxBytes: MAPPING_SIZE_LIMIT });
    return new TextDecoder('utf-8').decode(await vscode.workspace.fs.readFile(uri));
  } catch {
    return undefined;
  }
}

export type DefinitionText = { text: string } | { tooLarge: number } | undefined;

/**
 * A definition file's text for linting: the open editor's text, else the file read from disk; above
 * `maxBytes`, only its size (a file that large is never read whole).
 */
export async function readDefinitionText(uri: vscode.Uri, maxBytes: number): Promise<DefinitionText> {
  const open = vscode.workspace.textDocuments.find((d) => d.uri.toString() === uri.toString());
  if (open) return { text: open.getText() };
  if (uri.scheme !== 'file') return undefined; // definitions are linted on the local disk only (mappingFor)
  try {
    return { text: readRegularText(uri.fsPath, { maxBytes }) };
  } catch (error) {
    if (error instanceof FileReadError && error.reason === 'too-large') return { tooLarge: error.size ?? maxBytes + 1 };
    return undefined;
  }
}

/** A file that would be a folder's mapping file if it existed: a standard name at a folder's root. */
export function isMappingFileName(uri: vscode.Uri): boolean {
  if (!isOneOf(MAPPING_FILE_NAMES, path.basename(uri.path))) return false;
  const folder = vscode.workspace.getWorkspaceFolder(uri);
  return folder !== undefined && path.dirname(uri.fsPath) === folder.uri.fsPath;
}

export class Mappings {
  private states = new Map<string, MappingState>();

  all(): MappingState[] {
    return [...this.states.values()];
  }

  /** Reloads every folder's mapping file; returns the states found. */
  async reloadAll(): Promise<MappingState[]> {
    const next = new Map<string, MappingState>();
    for (const folder of vscode.workspace.workspaceFolders ?? []) {
      const uri = await mappingFileOfFolder(folder);
      if (!uri) continue;
      next.set(folder.uri.toString(), await this.load(folder, uri));
    }
    this.states = next;
    return this.all();
  }

  /** Reloads one mapping file, from the given text when it is open in an editor. */
  async reload(uri: vscode.Uri, text?: string): Promise<MappingState | undefined> {
    const folder = vscode.workspace.getWorkspaceFolder(uri);
    if (!folder) return undefined;
    const state = await this.load(folder, uri, text);
    this.states.set(folder.uri.toString(), state);
    return state;
  }

  /** The mapping state of a mapping file, if this URI is one in use. */
  stateOfMappingFile(uri: vscode.Uri): MappingState | undefined {
    return this.all().find((s) => s.uri.toString() === uri.toString());
  }

  /** The loaded mapping that includes a definition file, if any. */
  mappingFor(uri: vscode.Uri): Mapping | undefined {
    if (uri.scheme !== 'file') return undefined;
    for (const state of this.states.values()) {
      if (state.mapping && state.uri.fsPath !== uri.fsPath && state.mapping.includes(uri.fsPath)) return state.mapping;
    }
    return undefined;
  }

  private async load(folder: vscode.WorkspaceFolder, uri: vscode.Uri, text?: string): Promise<MappingState> {
    const source = text ?? (await readText(uri));
    if (source === undefined) {
      return { folder, uri, problems: [{ message: 'the mapping file cannot be read', pointer: '', range: { offset: 0, length: 0, line: 1, column: 1, endLine: 1, endColumn: 1 } }] };
    }
    const loaded = loadMapping(source, uri.fsPath);
    return { folder, uri, mapping: loaded.mapping, problems: loaded.problems };
  }
}
