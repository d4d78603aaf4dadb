import type { ICellRendererParams } from 'ag-grid-community';
import type { SarMargin, SarParameter, SarRow } from './sar-api';
import { cellText, marginText, WINDOW_WORDS } from './sar-format';

// The grid's most numerous cells (values, margins, calls) are drawn by plain functions returning
// elements: an Angular component per cell costs more than the frame budget when scrolling through
// thousands of rows. Text goes in through textContent, never as markup.

function el(tag: string, className: string | null, text?: string, attrs: Record<string, string> = {}): HTMLElement {
  const e = document.createElement(tag);
  if (className) e.className = className;
  if (text !== undefined) e.textContent = text;
  for (const [k, v] of Object.entries(attrs)) e.setAttribute(k, v);
  return e;
}

function none(label: string): HTMLElement {
  return el('span', 'lg-cell-none', '–', { 'aria-label': label });
}

/** "mean ± SD (n)" with its qualifier; † when censored values were left out, S when submitted results count. */
export function valueRenderer(params: ICellRendererParams<SarRow> & { column: string; parameter: SarParameter }): HTMLElement {
  const cell = params.data?.cells[params.column];
  if (!cell) return none('no result');
  const box = el('span', 'lg-cell');
  box.append(el('span', null, cellText(params.parameter, cell)));
  if (cell.flag === 'censored-excluded') box.append(el('span', 'lg-cell-mark', '†', { title: 'censored values left out of the mean', 'aria-label': 'censored values left out of the mean' }));
  if (cell.submitted) box.append(el('span', 'lg-cell-mark lg-cell-submitted', 'S', { title: 'includes submitted results not yet approved', 'aria-label': 'includes submitted results' }));
  return box;
}

/** A margin with its fold; inside the window marked ⚠ (not only by colour), a bound that may be inside ?. */
export function marginRenderer(params: ICellRendererParams<SarRow> & { targetId?: number }): HTMLElement {
  const r = params.data;
  const m: SarMargin | null | undefined = r ? (params.targetId !== undefined ? r.margins[params.targetId] : r.worstMargin) : null;
  if (!m) return none('no margin');
  const text = marginText(m);
  const box = el('span', 'lg-cell', undefined, { 'aria-label': `${text}, ${WINDOW_WORDS[m.window]}` });
  if (m.window === 'inside') box.append(el('span', 'lg-cell-warn', '⚠', { 'aria-hidden': 'true' }));
  if (m.window === 'uncertain') box.append(el('span', 'lg-cell-maybe', '?', { 'aria-hidden': 'true' }));
  box.append(el('span', null, text));
  return box;
}

/** A ligand-type call; a pharmacologist's override and a contradicted override are marked. */
export function callRenderer(params: ICellRendererParams<SarRow> & { targetId: number }): HTMLElement {
  const c = params.data?.calls?.[params.targetId];
  if (!c) return none('no call');
  const box = el('span', 'lg-cell lg-cell-call');
  box.append(el('span', null, c.call));
  if (c.source === 'manual') box.append(el('span', 'lg-cell-mark', '✎', { title: 'set by a pharmacologist (override)', 'aria-label': 'set by a pharmacologist' }));
  if (c.contradicted) box.append(el('span', 'lg-cell-warn', '⚑', { title: 'a later computed call disagrees with this override: review it', 'aria-label': 'a later result disagrees: review' }));
  return box;
}
