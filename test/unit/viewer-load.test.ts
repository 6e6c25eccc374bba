import { readFileSync } from 'node:fs';
import { runRecipe, stackLayers } from '../../packages/solver2d/src/index.ts';
import { beforeAll, describe, expect, it } from 'vitest';
import { encodeNpy } from '../../packages/cli/src/files.ts';
import { FileProblem, loadDataSet, relativePaths, type FileSource } from '../../packages/viewer/src/load.ts';

/** Files in memory, as a picked folder would give them. */
class MemorySource implements FileSource {
  label = 'memory';
  constructor(readonly files: Map<string, Uint8Array>) {}
  has(path: string) { return this.files.has(path); }
  async read(path: string) {
    const b = this.files.get(path);
    if (!b) throw new FileProblem(path, 'not found');
    return b.buffer.slice(b.byteOffset, b.byteOffset + b.byteLength) as ArrayBuffer;
  }
  async list() { return [...this.files.keys()]; }
}

const text = (s: string) => new TextEncoder().encode(s);
let runFiles: Map<string, Uint8Array>;

beforeAll(() => {
  const recipe = JSON.parse(readFileSync('examples/base-resistor.json', 'utf8'));
  const { report, field } = runRecipe(recipe);
  runFiles = new Map([
    ['report.json', text(JSON.stringify(report))],
    ['field.npy', encodeNpy(stackLayers(field), report.field.shape)],
    ['x.npy', encodeNpy(field.mesh.x, [field.mesh.nx])],
    ['z.npy', encodeNpy(field.mesh.z, [field.mesh.nz])],
  ]);
});

function inFolder(dir: string, files: Map<string, Uint8Array>): [string, Uint8Array][] {
  return [...files].map(([k, v]) => [`${dir}/${k}`, v]);
}

/** Files over a connection that can list them but not say whether one exists, logging every read. */
class ListingSource implements FileSource {
  label = 'served';
  readonly reads: string[] = [];
  constructor(readonly files: Map<string, Uint8Array>, private readonly listing: boolean) {}
  async read(path: string) {
    this.reads.push(path);
    const b = this.files.get(path);
    if (!b) throw new FileProblem(path, 'not found');
    return b.buffer.slice(b.byteOffset, b.byteOffset + b.byteLength) as ArrayBuffer;
  }
  async list() { return this.listing ? [...this.files.keys()].filter((p) => p.endsWith('.json')) : null; }
}

describe('opening folders', () => {
  it('does not ask for sweep.json when the listing shows a lone run, and reads each file once', async () => {
    const source = new ListingSource(new Map(runFiles), true);
    const set = await loadDataSet(source);
    expect(set.problems).toEqual([]);
    expect(set.kind).toBe('run');
    expect(source.reads).not.toContain('sweep.json');
    expect([...source.reads].sort()).toEqual(['field.npy', 'report.json', 'x.npy', 'z.npy']);
    // Without a listing it still finds the run, by asking.
    const blind = new ListingSource(new Map(runFiles), false);
    expect((await loadDataSet(blind)).runs).toHaveLength(1);
    expect(blind.reads).toContain('sweep.json');
  });

  it('opens a lone run folder with its layers and mesh', async () => {
    const set = await loadDataSet(new MemorySource(new Map(runFiles)));
    expect(set.problems).toEqual([]);
    expect(set.kind).toBe('run');
    expect(set.runs).toHaveLength(1);
    const run = set.runs[0];
    expect(run.layers).toEqual(['net', 'B']);
    expect(run.field.length).toBe(2 * run.x.length * run.z.length);
  });

  it('opens a sweep in the order of its swept values, not of the listing', async () => {
    const files = new Map<string, Uint8Array>([...inFolder('b', runFiles), ...inFolder('a', runFiles), ...inFolder('c', runFiles)]);
    files.set('sweep.json', text(JSON.stringify({
      schema: 'edgewise.sweep/1', parameters: ['windowWidthUm'],
      runs: [
        { id: 1, dir: 'a', values: { windowWidthUm: 8 }, status: 'ok', error: null },
        { id: 2, dir: 'b', values: { windowWidthUm: 2 }, status: 'ok', error: null },
        { id: 3, dir: 'c', values: { windowWidthUm: 4 }, status: 'ok', error: null },
      ],
    })));
    const set = await loadDataSet(new MemorySource(files));
    expect(set.problems).toEqual([]);
    expect(set.runs.map((r) => r.values.windowWidthUm)).toEqual([2, 4, 8]);
  });

  it('names the file and the reason for a malformed report, and still shows the other runs', async () => {
    const files = new Map<string, Uint8Array>([...inFolder('good', runFiles), ...inFolder('bad', runFiles)]);
    files.set('bad/report.json', text('{"schema": "edgewise.report/1", "windows": [ '));
    const set = await loadDataSet(new MemorySource(files));
    expect(set.kind).toBe('folders');
    expect(set.runs.map((r) => r.dir)).toEqual(['good']);
    expect(set.problems).toHaveLength(1);
    expect(set.problems[0].file).toBe('bad/report.json');
    expect(set.problems[0].reason).toMatch(/not valid JSON/);
  });

  it('says which key of a report is wrong', async () => {
    const files = new Map(runFiles);
    const report = JSON.parse(new TextDecoder().decode(runFiles.get('report.json')));
    report.field.shape = [2, 10];
    files.set('report.json', text(JSON.stringify(report)));
    const set = await loadDataSet(new MemorySource(files));
    expect(set.problems[0]).toEqual({ file: 'report.json', reason: expect.stringMatching(/"field\.shape"/) });
  });

  it('says a field file is missing, or does not match the report\'s shape', async () => {
    const missing = new Map(runFiles);
    missing.delete('field.npy');
    expect((await loadDataSet(new MemorySource(missing))).problems[0]).toEqual({ file: 'field.npy', reason: 'not found' });
    const wrong = new Map(runFiles);
    wrong.set('z.npy', encodeNpy(new Float64Array(5), [5]));
    expect((await loadDataSet(new MemorySource(wrong))).problems[0].file).toBe('z.npy');
  });

  it('reports a run the sweep recorded as failed, with its error', async () => {
    const files = new Map<string, Uint8Array>(inFolder('a', runFiles));
    files.set('sweep.json', text(JSON.stringify({
      schema: 'edgewise.sweep/1', parameters: ['windowWidthUm'],
      runs: [
        { id: 1, dir: 'a', values: { windowWidthUm: 8 }, status: 'ok', error: null },
        { id: 2, dir: 'b', values: { windowWidthUm: 0.5 }, status: 'failed', error: 'mask.windows[0]: must have x1 > x0' },
      ],
    })));
    const set = await loadDataSet(new MemorySource(files));
    expect(set.runs).toHaveLength(1);
    expect(set.problems[0].reason).toMatch(/run 2 failed in the sweep: mask\.windows\[0\]/);
  });

  it('says there is nothing to open in an empty folder', async () => {
    const set = await loadDataSet(new MemorySource(new Map([['notes.txt', text('hello')]])));
    expect(set.runs).toEqual([]);
    expect(set.problems[0].reason).toMatch(/no report\.json/);
  });

  it('takes paths relative to a picked folder', () => {
    expect(relativePaths(['s/a/report.json', 's/sweep.json'])).toEqual({ root: 's', paths: ['a/report.json', 'sweep.json'] });
    expect(relativePaths(['report.json', 'x.npy']).root).toBe('');
  });
});
