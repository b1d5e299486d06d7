// The base side of a review read from a git revision (`cachewright compare --git REF`, the editor's
// "Compare with a git revision..."): extracted into a temporary folder with `git archive`, so the
// work tree, the index and HEAD are never touched. This layer alone runs git.
import { spawn, spawnSync } from 'node:child_process';
import * as fs from 'node:fs';
import * as os from 'node:os';
import * as nodePath from 'node:path';
import { fail, ok, type Outcome } from '../core/results';

export interface ExtractedRevision {
  /** The folder in the extracted tree that corresponds to the head folder. */
  baseDir: string;
  /** The commit the revision named, for messages. */
  commit: string;
  remove(): void;
}

function git(cwd: string, args: readonly string[]): Outcome<string> {
  const run = spawnSync('git', args, { cwd, encoding: 'utf8', maxBuffer: 16 * 1024 * 1024 });
  if (run.error) return fail(`cannot run git: ${run.error.message}`);
  if (run.status !== 0) return fail((run.stderr || `git ${args[0]} failed`).trim().split('\n')[0] ?? 'git failed');
  return ok(run.stdout.trim());
}

/** `git archive REF | tar -x -C folder`, streamed, with both sides' failures reported. */
function archiveInto(repo: string, commit: string, folder: string): Promise<Outcome<void>> {
  return new Promise((resolve) => {
    const archive = spawn('git', ['archive', '--format=tar', commit], { cwd: repo, stdio: ['ignore', 'pipe', 'pipe'] });
    const untar = spawn('tar', ['-x', '-f', '-', '-C', folder], { stdio: ['pipe', 'ignore', 'pipe'] });
    let errors = '';
    archive.stderr.on('data', (chunk: Buffer) => (errors += chunk.toString()));
    untar.stderr.on('data', (chunk: Buffer) => (errors += chunk.toString()));
    archive.stdout.pipe(untar.stdin);
    let pending = 2;
    let failed: string | undefined;
    const done = (what: string) => (code: number | null) => {
      if (code !== 0 && failed === undefined) failed = `${what} failed: ${errors.trim().split('\n')[0] ?? `exit ${code}`}`;
      if (--pending === 0) resolve(failed === undefined ? ok(undefined) : fail(failed));
    };
    archive.on('error', (error) => {
      failed ??= `cannot run git: ${error.message}`;
      untar.stdin.end();
    });
    untar.on('error', (error) => (failed ??= `cannot run tar: ${error.message}`));
    archive.on('close', done('git archive'));
    untar.on('close', done('tar'));
  });
}

/** Extracts the whole repository at `ref` and says where `headDir` sits in it. */
export async function extractRevision(ref: string, headDir: string): Promise<Outcome<ExtractedRevision>> {
  const top = git(headDir, ['rev-parse', '--show-toplevel']);
  if (!top.ok) return fail(`${headDir} is not inside a git repository (${top.error})`);
  const prefix = git(headDir, ['rev-parse', '--show-prefix']);
  if (!prefix.ok) return fail(prefix.error);
  const commit = git(headDir, ['rev-parse', '--verify', '--quiet', '--end-of-options', `${ref}^{commit}`]);
  if (!commit.ok || commit.value === '') return fail(`"${ref}" names no commit in ${top.value}`);
  const folder = fs.mkdtempSync(nodePath.join(os.tmpdir(), 'cachewright-base-'));
  const remove = () => fs.rmSync(folder, { recursive: true, force: true });
  const archived = await archiveInto(top.value, commit.value, folder);
  if (!archived.ok) {
    remove();
    return fail(archived.error);
  }
  const baseDir = nodePath.join(folder, ...prefix.value.split('/').filter((p) => p !== ''));
  fs.mkdirSync(baseDir, { recursive: true });
  return ok({ baseDir, commit: commit.value, remove });
}

export interface Revisions {
  branches: string[];
  tags: string[];
}

/** The branches (local, then remote) and tags of the repository `dir` is in, for a revision picker. */
export function listRevisions(dir: string): Outcome<Revisions> {
  const top = git(dir, ['rev-parse', '--show-toplevel']);
  if (!top.ok) return fail(`${dir} is not inside a git repository (${top.error})`);
  const refs = git(dir, ['for-each-ref', '--format=%(refname)', 'refs/heads', 'refs/remotes', 'refs/tags']);
  if (!refs.ok) return fail(refs.error);
  const branches: string[] = [];
  const tags: string[] = [];
  for (const ref of refs.value.split('\n')) {
    if (ref.startsWith('refs/heads/')) branches.push(ref.slice('refs/heads/'.length));
    else if (ref.startsWith('refs/remotes/') && !ref.endsWith('/HEAD')) branches.push(ref.slice('refs/remotes/'.length));
    else if (ref.startsWith('refs/tags/')) tags.push(ref.slice('refs/tags/'.length));
  }
  return ok({ branches, tags });
}
