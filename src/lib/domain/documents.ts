// Standard operating procedures (PDF) attached to a box or a training module. Shared by the
// server and the documents component, so the limits and the wording are the same on both sides.

/** Largest PDF accepted; storage.ts re-exports it so its check and the client's agree. */
export const MAX_DOCUMENT_BYTES = 20 * 1024 * 1024;

export const DOCUMENT_TITLE_MIN = 3;
export const DOCUMENT_TITLE_MAX = 160;

/** What the box page and the training page show of a document. */
export type DocumentSummary = {
	id: number;
	title: string;
	sizeBytes: number;
	uploadedAt: Date;
	uploadedBy: string | null;
	url: string;
};

/** Where a document hangs: a box or a training module, never both. */
export type DocumentTarget = { boxId: number } | { moduleId: number };

export const documentUrl = (id: number) => `/documents/${id}`;

/** "820 B", "14 KB", "3.2 MB" (binary multiples, as the 20 MB limit is counted). */
export function formatSize(bytes: number): string {
	if (bytes < 1024) return `${bytes} B`;
	const kb = bytes / 1024;
	if (kb < 1024) return `${Math.round(kb)} KB`;
	const mb = kb / 1024;
	return `${mb < 10 ? mb.toFixed(1) : Math.round(mb)} MB`;
}

/**
 * A file name for the title that every browser takes as is in a quoted `filename="…"`:
 * accents folded (NFKD), anything but letters, digits, space, dot, dash and underscore made a
 * dash, at most 100 characters, never empty. The title itself stays as the user wrote it.
 */
export function documentFileName(title: string): string {
	const base = title
		.normalize('NFKD')
		.replace(/[\u0300-\u036f]/g, '')
		.replace(/\s+/g, ' ')
		.replace(/[^A-Za-z0-9 ._-]+/g, '-')
		.replace(/-{2,}/g, '-')
		.replace(/^[\s.-]+|[\s.-]+$/g, '')
		.slice(0, 100)
		.trim();
	return `${base || 'document'}.pdf`;
}
