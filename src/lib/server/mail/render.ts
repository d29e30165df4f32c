// What the outbox worker sends for a row: rendered from its template and data, or, for a
// row queued before messages were rendered at send time, the bodies stored in it.
import { renderMessage, type Rendered } from './messages';

export type RenderableRow = {
	template: string | null;
	data: string | null;
	textBody: string | null;
	htmlBody: string | null;
	icsMethod: string | null;
	icsBody: string | null;
};

/** Throws (a failed attempt for the worker) when the row cannot be rendered. */
export function renderRow(row: RenderableRow): Rendered {
	if (row.template !== null) return renderMessage(row.template, row.data ?? '');
	if (row.textBody === null || row.htmlBody === null)
		throw new Error('outbox row has neither a template nor a body');
	if (row.icsBody === null) return { text: row.textBody, html: row.htmlBody };
	// Old rows held REQUEST or CANCEL; the worker sent a missing method as REQUEST.
	const icsMethod = row.icsMethod === 'CANCEL' ? 'CANCEL' : 'REQUEST';
	return { text: row.textBody, html: row.htmlBody, icsMethod, ics: row.icsBody };
}
