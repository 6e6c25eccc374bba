import { LocalFilesSource, relativePaths } from './load.ts';

/**
 * Files the user chose: a folder from the picker (each File carries its path inside it),
 * single files, or whatever was dropped (folders are walked through the entries API).
 */
export function sourceFromFileList(files: FileList | File[]): LocalFilesSource {
  const list = [...files];
  const raw = list.map((f) => (f as File & { webkitRelativePath?: string }).webkitRelativePath || f.name);
  const { root, paths } = relativePaths(raw);
  return new LocalFilesSource(root || (list.length === 1 ? list[0].name : `${list.length} chosen files`), paths.map((p, k) => [p, list[k]]));
}

function readAll(reader: FileSystemDirectoryReader): Promise<FileSystemEntry[]> {
  return new Promise((resolve, reject) => {
    const out: FileSystemEntry[] = [];
    // readEntries hands back a batch at a time; an empty batch means the end.
    const next = () => reader.readEntries((batch) => {
      if (batch.length === 0) resolve(out);
      else {
        out.push(...batch);
        next();
      }
    }, reject);
    next();
  });
}

async function walk(entry: FileSystemEntry, prefix: string, out: [string, File][]): Promise<void> {
  const path = prefix ? `${prefix}/${entry.name}` : entry.name;
  if (entry.isFile) {
    const file = await new Promise<File>((resolve, reject) => (entry as FileSystemFileEntry).file(resolve, reject));
    out.push([path, file]);
  } else if (entry.isDirectory) {
    for (const child of await readAll((entry as FileSystemDirectoryEntry).createReader())) await walk(child, path, out);
  }
}

export async function sourceFromDrop(data: DataTransfer): Promise<LocalFilesSource> {
  const entries = [...data.items].map((i) => i.webkitGetAsEntry?.()).filter((e): e is FileSystemEntry => !!e);
  if (entries.length === 0) return sourceFromFileList(data.files);
  const found: [string, File][] = [];
  for (const e of entries) await walk(e, '', found);
  const { root, paths } = relativePaths(found.map(([p]) => p));
  return new LocalFilesSource(root || `${found.length} dropped files`, paths.map((p, k) => [p, found[k][1]]));
}

/** A lone JSON file that is neither a report nor a sweep: taken as a recipe for the live mode. */
export function loneRecipeFile(source: LocalFilesSource): File | null {
  const names = [...source.files.keys()];
  if (names.some((n) => /(^|\/)(report|sweep)\.json$/.test(n))) return null;
  const json = names.filter((n) => n.endsWith('.json'));
  return json.length === 1 && names.length === 1 ? source.files.get(json[0])! : null;
}
