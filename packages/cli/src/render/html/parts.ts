/** Building blocks of the report's sections. Every argument named `text` is escaped here; `html` ones are trusted markup. */
import { attrs, esc } from './escape.js';

/** A key number: label, value (with unit) and an optional line below. */
export interface Card {
  label: string;
  value: string;
  /** Unit, shown smaller after the value. */
  unit?: string;
  sub?: string;
  /** A machine-readable copy of the value (data-value). */
  data?: number | string | null;
}

export function cardsHtml(cards: readonly Card[]): string {
  if (!cards.length) return '';
  const items = cards.map(
    (c) =>
      `<div class="card"${attrs({ 'data-value': c.data ?? undefined })}><dt>${esc(c.label)}</dt><dd>${esc(c.value)}${c.unit && c.value !== '\u2013' ? ` <span class="unit">${esc(c.unit)}</span>` : ''}${
        c.sub ? `<span class="sub">${esc(c.sub)}</span>` : ''
      }</dd></div>`,
  );
  return `<dl class="cards">${items.join('')}</dl>`;
}

/** A table column: header text, numeric alignment, optional class for the cells. */
export interface TableColumn {
  header: string;
  numeric?: boolean;
  className?: string;
}

/** A cell: plain text (escaped) or `{ html }` (already escaped markup). */
export type Cell = string | { html: string };

function cellHtml(c: Cell): string {
  return typeof c === 'string' ? esc(c) : c.html;
}

/** A table in a scrolling wrapper; `caption` is escaped text, `id` names it (data-table). */
export function tableHtml(id: string, caption: string, columns: readonly TableColumn[], rows: readonly (readonly Cell[])[]): string {
  const head = columns.map((c) => `<th scope="col"${attrs({ class: c.numeric ? 'n' : undefined })}>${esc(c.header)}</th>`).join('');
  const body = rows
    .map(
      (r) =>
        `<tr>${columns
          .map((c, i) => {
            const cls = [c.numeric ? 'n' : '', c.className ?? ''].filter(Boolean).join(' ');
            return `<td${attrs({ class: cls || undefined })}>${cellHtml(r[i] ?? '')}</td>`;
          })
          .join('')}</tr>`,
    )
    .join('');
  return `<div class="table-wrap"><table${attrs({ 'data-table': id })}><caption>${esc(caption)}</caption><thead><tr>${head}</tr></thead><tbody>${body}</tbody></table></div>`;
}

/** A figure around an SVG plot: `data-plot` on the figure, an escaped caption with a bold lead. */
export function figureHtml(plotId: string, svg: string, lead: string, caption: string): string {
  return `<figure${attrs({ 'data-plot': plotId, id: `figure-${plotId}` })}><div class="plot-wrap">${svg}</div><figcaption><strong>${esc(lead)}</strong> ${esc(caption)}</figcaption></figure>`;
}

/** A report section with a stable id and heading. */
export function sectionHtml(id: string, title: string, introHtml: string, bodyHtml: string): string {
  return `<section${attrs({ id, 'aria-labelledby': `${id}-title` })}><h2 id="${id}-title">${esc(title)}</h2>${introHtml}${bodyHtml}</section>`;
}

/** A list of short notes (escaped). */
export function notesHtml(notes: readonly string[]): string {
  if (!notes.length) return '';
  return `<ul class="plain note">${notes.map((n) => `<li>${esc(n)}</li>`).join('')}</ul>`;
}
