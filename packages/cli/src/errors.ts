import { statSync } from 'node:fs';
import { dirname } from 'node:path';

/** Bad command-line input: exit code 2, one line naming the option and what it allows. */
export class UsageError extends Error {
  constructor(message: string) {
    super(message);
    this.name = 'UsageError';
  }
}

/**
 * A path the user gave that cannot be used: a recipe or input file that cannot be read or
 * parsed, an output folder that cannot be written or leads outside itself. Exit code 2.
 */
export class InputError extends Error {
  constructor(message: string) {
    super(message);
    this.name = 'InputError';
  }
}

/** The machine failed, not the input (the disk is full): exit code 1, one line, no stack. */
export class EnvironmentError extends Error {
  constructor(message: string) {
    super(message);
    this.name = 'EnvironmentError';
  }
}

export type FileAccess = 'read' | 'write';

interface Cause {
  cause: string;
  /** the cause in words when writing, where it differs */
  writing?: string;
  read: string;
  write: string;
  /** true: the path given is at fault (exit 2); false: the machine is (exit 1) */
  input: boolean;
}

const NO_SPACE_FIX = 'free some space, or choose a folder on another disk with --out';

/** File-system error codes the CLI answers in words, with what to do about each. */
const CAUSES: Record<string, Cause> = {
  EACCES: { cause: 'permission denied', read: "check the file's permissions", write: 'choose a folder you may write to with --out, or change its permissions', input: true },
  EPERM: { cause: 'operation not permitted', read: "check the file's permissions", write: 'choose a folder you may write to with --out, or change its permissions', input: true },
  EROFS: { cause: 'the file system is read-only', read: 'check the path', write: 'choose a folder on a writable disk with --out', input: true },
  ENOTDIR: { cause: 'a part of the path is a file, not a folder', read: 'check the path', write: 'move that file away, or choose another folder with --out', input: true },
  // A folder on the way that is missing while writing: writeAtomic has just made every folder,
  // so the file system refused (under /proc) or another program removed one.
  ENOENT: { cause: 'no such file or folder', writing: 'a folder on the way cannot be made there', read: 'check the path', write: 'choose another folder with --out', input: true },
  EISDIR: { cause: 'it is a folder, not a file', read: 'give the file inside it', write: 'move that folder away, or choose another folder with --out', input: true },
  ENOSPC: { cause: 'no space left on device', read: NO_SPACE_FIX, write: NO_SPACE_FIX, input: false },
  EDQUOT: { cause: 'disk quota exceeded', read: NO_SPACE_FIX, write: NO_SPACE_FIX, input: false },
  EIO: { cause: 'input/output error: the disk or its connection failed', read: 'check the disk, then try again', write: 'check the disk, or choose a folder on another disk with --out', input: false },
};

/**
 * A file-system error met while reading or writing `path`, as one line: the path, the cause
 * in plain words and what to do. InputError when the path given is at fault, EnvironmentError
 * when the machine is; null for an error this does not know (the caller rethrows it as it is).
 */
export function fileSystemError(e: unknown, access: FileAccess, path: string): InputError | EnvironmentError | null {
  const code = (e as NodeJS.ErrnoException | null)?.code;
  const known = typeof code === 'string' && Object.hasOwn(CAUSES, code) ? CAUSES[code] : null;
  if (!known) return null;
  const file = code === 'ENOTDIR' ? fileInTheWay(path) : null;
  const cause = file ? `${file} is a file, not a folder` : access === 'write' ? known.writing ?? known.cause : known.cause;
  const message = `${path}: cannot be ${access === 'read' ? 'read' : 'written'}: ${cause}; ${known[access]}`;
  return known.input ? new InputError(message) : new EnvironmentError(message);
}

/** The ancestor of `path` that exists and is not a folder (why a path gives ENOTDIR), or null. */
function fileInTheWay(path: string): string | null {
  for (let p = dirname(path); ; p = dirname(p)) {
    try {
      const stat = statSync(p, { throwIfNoEntry: false });
      if (stat) return stat.isDirectory() ? null : p;
    } catch {
      // ENOTDIR again: a file lies further up.
    }
    if (dirname(p) === p) return null;
  }
}
