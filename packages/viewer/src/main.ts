import { App } from './app.ts';
import { pageElements } from './elements.ts';
import { HttpSource, type FileSource } from './load.ts';
import { loneRecipeFile, sourceFromDrop, sourceFromFileList } from './pick.ts';
import { TestHooks } from './test-hooks.ts';
import './style.css';

/**
 * Start-up: served by `edgewise view`, the page opens the folder the server names (api/source);
 * otherwise it waits for a folder to be picked or dropped.
 */
const elements = pageElements();
const app = new App(elements);

async function openLocal(source: ReturnType<typeof sourceFromFileList>): Promise<void> {
  const recipe = loneRecipeFile(source);
  if (recipe) {
    try {
      app.setLiveRecipe(JSON.parse(await recipe.text()), recipe.name);
    } catch (e) {
      app.setData({ label: recipe.name, kind: 'run', parameters: [], runs: [], problems: [{ file: recipe.name, reason: `not a recipe: ${(e as Error).message}` }], recipe: null });
    }
    return;
  }
  await app.open(source);
}

for (const [button, input] of [['open-folder', 'folder-input'], ['open-files', 'files-input'], [null, 'recipe-input']] as const) {
  const el = document.getElementById(input) as HTMLInputElement;
  if (button) document.getElementById(button)!.addEventListener('click', () => el.click());
  el.addEventListener('change', () => {
    if (el.files && el.files.length > 0) void openLocal(sourceFromFileList(el.files));
    el.value = '';
  });
}

window.addEventListener('dragover', (e) => {
  e.preventDefault();
  document.body.classList.add('dropping');
});
window.addEventListener('dragleave', (e) => {
  if (e.relatedTarget === null) document.body.classList.remove('dropping');
});
window.addEventListener('drop', (e) => {
  e.preventDefault();
  document.body.classList.remove('dropping');
  if (e.dataTransfer) void sourceFromDrop(e.dataTransfer).then(openLocal);
});

interface ServedSource {
  label: string;
  recipe: boolean;
}

async function start(): Promise<void> {
  let served: ServedSource | null = null;
  try {
    const r = await fetch('api/source', { cache: 'no-store' });
    if (r.ok) served = (await r.json()) as ServedSource;
  } catch {
    served = null;
  }
  if (!served) {
    app.setData({ label: '', kind: 'run', parameters: [], runs: [], problems: [], recipe: null });
    app.setEmpty('Open a run or sweep folder (buttons above), or drop one on the page.');
    return;
  }
  if (served.recipe) {
    try {
      const r = await fetch('recipe.json', { cache: 'no-store' });
      app.setLiveRecipe(await r.json(), 'recipe given to edgewise view');
    } catch (e) {
      console.warn('recipe.json', e);
    }
  }
  const source: FileSource = new HttpSource(served.label, 'data/', 'api/list', 'api/files');
  await app.open(source);
}

declare global {
  interface Window {
    edgewise: { app: TestHooks; ready: Promise<void> };
  }
}

window.edgewise = { app: new TestHooks(app), ready: start() };
