// How the audit screen reads: the action in words, an entry's details in one short line (the
// full JSON stays one click away on the page), and the links that narrow or page the filter.

/**
 * The screen's address with some filters changed: unchanged ones kept, empty ones dropped,
 * and back to page 1 unless the change is the page itself.
 */
export function filterHref(
	current: Record<string, string>,
	changes: Record<string, string | number | undefined>
): string {
	const next: Record<string, string | number | undefined> = {
		...current,
		page: undefined,
		...changes
	};
	const params = new URLSearchParams();
	for (const [key, value] of Object.entries(next))
		if (value !== undefined && value !== '' && !(key === 'page' && Number(value) === 1))
			params.set(key, String(value));
	const query = params.toString();
	return query ? `?${query}` : '?';
}

/** "glove_change.step_undone" → "Glove change: step undone". */
export function actionWords(action: string): string {
	const [entity, ...rest] = action.split('.');
	const words = (s: string) => s.replace(/_/g, ' ');
	const head = words(entity).replace(/^./, (c) => c.toUpperCase());
	return rest.length ? `${head}: ${words(rest.join(' '))}` : head;
}

function valueWords(value: unknown): string {
	if (value === null || value === undefined) return '—';
	if (typeof value === 'string') return value;
	if (typeof value === 'number' || typeof value === 'boolean') return String(value);
	if (Array.isArray(value)) {
		if (!value.length) return 'none';
		return value.every((v) => v === null || typeof v !== 'object')
			? value.map(valueWords).join(', ')
			: `${value.length} item${value.length === 1 ? '' : 's'}`;
	}
	const keys = Object.keys(value as object);
	return keys.length ? `{${keys.join(', ')}}` : '—';
}

/** "camelCase" → "camel case": keys as a person reads them. */
const keyWords = (key: string) => key.replace(/([a-z0-9])([A-Z])/g, '$1 $2').toLowerCase();

/**
 * The details of an entry in one line of at most `max` characters: each key and its value,
 * lists of plain values joined, nested objects named by their keys.
 */
export function summariseDetails(details: unknown, max = 160): string {
	if (details === null || details === undefined) return '';
	const line =
		typeof details === 'object' && !Array.isArray(details)
			? Object.entries(details as Record<string, unknown>)
					.map(([k, v]) => `${keyWords(k)}: ${valueWords(v)}`)
					.join(' · ')
			: valueWords(details);
	return line.length > max ? `${line.slice(0, max - 1).trimEnd()}…` : line;
}
