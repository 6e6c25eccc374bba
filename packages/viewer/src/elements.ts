/**
 * The page's fixed elements (index.html), looked up once at start-up and handed to the
 * parts that use them, and the ones the app adds to the view and the side bar.
 */
export interface PageElements {
  /** the area the tiles are drawn in */
  view: HTMLElement;
  side: HTMLElement;
  panel: HTMLElement;
  messages: HTMLElement;
  sourceLabel: HTMLElement;
  back: HTMLButtonElement;
  /** the header's button between the edge view and the full width */
  shownToggle: HTMLButtonElement;
  progress: HTMLElement;
  recipeInput: HTMLInputElement;
  captions: HTMLElement;
  readout: HTMLElement;
  empty: HTMLElement;
  colourBar: HTMLElement;
  scaleNote: HTMLElement;
  plot: HTMLElement;
}

function byId<T extends HTMLElement>(doc: Document, id: string): T {
  const e = doc.getElementById(id);
  if (!e) throw new Error(`the page has no element #${id}`);
  return e as T;
}

function make(parent: HTMLElement, className: string, id?: string): HTMLElement {
  const e = parent.ownerDocument.createElement('div');
  e.className = className;
  if (id) e.id = id;
  parent.append(e);
  return e;
}

/** Finds the page's elements and adds the overlays of the view and the side bar's parts. */
export function pageElements(doc: Document = document): PageElements {
  const view = byId(doc, 'view');
  const side = byId(doc, 'side');
  const panel = byId(doc, 'panel');
  const captions = make(view, 'captions');
  const readout = make(view, 'readout');
  readout.hidden = true;
  const empty = make(view, 'empty');
  const colourBar = make(side, 'colour-bar', 'colour-bar');
  const scaleNote = make(side, 'scale-note', 'scale-note');
  const plot = make(side, 'plot', 'plot');
  side.append(panel);
  return {
    view, side, panel, captions, readout, empty, colourBar, scaleNote, plot,
    messages: byId(doc, 'messages'),
    sourceLabel: byId(doc, 'source-label'),
    back: byId<HTMLButtonElement>(doc, 'back'),
    shownToggle: byId<HTMLButtonElement>(doc, 'shown'),
    progress: byId(doc, 'progress'),
    recipeInput: byId<HTMLInputElement>(doc, 'recipe-input'),
  };
}
