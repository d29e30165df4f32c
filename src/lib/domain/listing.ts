/**
 * A list's view as URL parameters: which column it is sorted by and which way, the page,
 * a free-text search and named filters. Every table that sorts, filters or pages reads its
 * view here, so a view can be bookmarked and shared, and a hand-edited address that names
 * a column or page that does not exist falls back to the list's default instead of failing.
 *
 * Two lists on one page keep apart with a prefix: `past.sort=box&past.page=2`.
 */

export type SortDir = 'asc' | 'desc';

export interface ListSpec<S extends string = string, F extends string = string> {
	/** The columns a person may sort by. */
	sorts: readonly S[];
	defaultSort: S;
	defaultDir: SortDir;
	/** Each filter's allowed values; any other value is ignored. */
	filters?: Readonly<Record<F, readonly string[]>>;
	perPage?: number;
	/** Parameter prefix for a second list on the same page. */
	prefix?: string;
}

export interface ListQuery<S extends string = string, F extends string = string> {
	sort: S;
	dir: SortDir;
	page: number;
	perPage: number;
	/** Free text, trimmed; '' when none. */
	q: string;
	filters: Partial<Record<F, string>>;
	prefix: string;
}

/** The view's shape once a list is loaded: what the table component needs to draw it. */
export interface ListView<S extends string = string, F extends string = string> extends ListQuery<
	S,
	F
> {
	total: number;
	pages: number;
}

export const DEFAULT_PER_PAGE = 25;
const MAX_TEXT = 100;

export function readListQuery<S extends string, F extends string>(
	params: URLSearchParams,
	spec: ListSpec<S, F>
): ListQuery<S, F> {
	const prefix = spec.prefix ? `${spec.prefix}.` : '';
	const get = (name: string) => params.get(prefix + name)?.trim() ?? '';
	const sort = (spec.sorts as readonly string[]).includes(get('sort'))
		? (get('sort') as S)
		: spec.defaultSort;
	const dirParam = get('dir');
	const dir: SortDir =
		dirParam === 'asc' || dirParam === 'desc'
			? dirParam
			: sort === spec.defaultSort
				? spec.defaultDir
				: 'asc';
	const pageParam = Number(get('page'));
	const page = Number.isInteger(pageParam) && pageParam >= 1 ? Math.min(pageParam, 1_000_000) : 1;
	const filters: Partial<Record<F, string>> = {};
	for (const [name, allowed] of Object.entries(spec.filters ?? {}) as [F, readonly string[]][]) {
		const value = get(name);
		if (allowed.includes(value)) filters[name] = value;
	}
	return {
		sort,
		dir,
		page,
		perPage: spec.perPage ?? DEFAULT_PER_PAGE,
		q: get('q').slice(0, MAX_TEXT),
		filters,
		prefix: spec.prefix ?? ''
	};
}

export function pageCount(total: number, perPage: number): number {
	return Math.max(1, Math.ceil(total / perPage));
}

/** The query with its page brought inside the list (a page past the end shows the last). */
export function withinPages<Q extends ListQuery>(query: Q, total: number): Q & ListView {
	const pages = pageCount(total, query.perPage);
	return { ...query, page: Math.min(query.page, pages), total, pages };
}

/** Row offset of the query's page. */
export function offsetOf(query: Pick<ListQuery, 'page' | 'perPage'>): number {
	return (query.page - 1) * query.perPage;
}

/**
 * The address of this view with some parameters changed; a change of sort, filter or search
 * starts again on page one. Parameters of other lists on the page are kept.
 */
export function listHref(
	current: URLSearchParams,
	view: Pick<ListQuery, 'prefix'>,
	changes: Record<string, string | number | undefined>
): string {
	const prefix = view.prefix ? `${view.prefix}.` : '';
	const next = new URLSearchParams(current);
	for (const [name, value] of Object.entries(changes)) {
		if (value === undefined || value === '') next.delete(prefix + name);
		else next.set(prefix + name, String(value));
	}
	if (!('page' in changes)) next.delete(`${prefix}page`);
	else if (String(changes.page) === '1') next.delete(`${prefix}page`);
	const text = next.toString();
	return text ? `?${text}` : '?';
}

/** A count with thousands grouped the facility's way: 524,274. */
export function count(n: number): string {
	return n.toLocaleString('en-GB');
}

/** "26–50 of 132", or "3 of 3" when it all fits on one page. */
export function rangeWords(view: ListView, shown: number): string {
	if (view.total === 0) return 'None';
	const first = offsetOf(view) + 1;
	const last = first + shown - 1;
	if (view.pages === 1) return `${count(view.total)} in all`;
	return `${count(first)}–${count(last)} of ${count(view.total)}`;
}

type SortValue = string | number | boolean | Date | null | undefined;

function compareValues(a: SortValue, b: SortValue): number {
	if (a === b) return 0;
	if (a === null || a === undefined) return 1;
	if (b === null || b === undefined) return -1;
	if (a instanceof Date && b instanceof Date) return a.getTime() - b.getTime();
	if (typeof a === 'string' && typeof b === 'string')
		return a.localeCompare(b, 'en', { sensitivity: 'base', numeric: true });
	return Number(a) - Number(b);
}

/**
 * Sorts, searches and pages a list already in memory on the server: for lists bounded by
 * their nature (a person's bookings, a facility's boxes and groups). Lists that grow without
 * bound (readings, the audit log, the outbox) page in SQL instead (server/listing.ts).
 * Empty values sort last either way; ties keep their given order.
 */
export function listInMemory<T, S extends string, F extends string>(
	rows: readonly T[],
	query: ListQuery<S, F>,
	options: {
		sortBy: Record<S, (row: T) => SortValue>;
		/** Words a row is found by, for the free-text search. */
		text?: (row: T) => string;
		/** Whether a row passes one filter's value. */
		filter?: { [K in F]?: (row: T, value: string) => boolean };
	}
): { rows: T[]; view: ListView<S, F> } {
	const words = query.q.toLowerCase().split(/\s+/).filter(Boolean);
	const kept = rows.filter((row) => {
		for (const [name, value] of Object.entries(query.filters) as [F, string][]) {
			const test = options.filter?.[name];
			if (test && !test(row, value)) return false;
		}
		if (words.length && options.text) {
			const haystack = options.text(row).toLowerCase();
			return words.every((w) => haystack.includes(w));
		}
		return true;
	});
	const key = options.sortBy[query.sort];
	const sign = query.dir === 'asc' ? 1 : -1;
	const sorted = kept
		.map((row, i) => ({ row, i, v: key(row) }))
		.sort((a, b) => {
			const empty = (v: SortValue) => v === null || v === undefined || v === '';
			if (empty(a.v) !== empty(b.v)) return empty(a.v) ? 1 : -1;
			return sign * compareValues(a.v, b.v) || a.i - b.i;
		})
		.map((x) => x.row);
	const view = withinPages(query, sorted.length);
	const start = offsetOf(view);
	return { rows: sorted.slice(start, start + view.perPage), view };
}
