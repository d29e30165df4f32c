import { and, asc, desc, like, or, type AnyColumn, type SQL, type SQLWrapper } from 'drizzle-orm';
import { offsetOf, withinPages, type ListQuery, type ListView } from '$lib/domain/listing';

/**
 * The ORDER BY of a list's view: its sort column in its direction, then a unique column so
 * that pages never overlap or skip a row when sort values tie.
 */
export function orderOf<S extends string>(
	query: ListQuery<S>,
	columns: Record<S, AnyColumn | SQLWrapper>,
	tieBreak: AnyColumn
): SQL[] {
	const by = query.dir === 'asc' ? asc : desc;
	return [by(columns[query.sort]), by(tieBreak)];
}

/**
 * One page of a list that grows without bound, paged in SQL: the count first, so a page
 * past the end shows the last one, then that page's rows. The total is always returned, so
 * no list stops at a silent cut-off.
 */
export async function pageInSql<T, S extends string, F extends string>(
	query: ListQuery<S, F>,
	count: () => Promise<number>,
	fetch: (limit: number, offset: number) => Promise<T[]>
): Promise<{ rows: T[]; view: ListView<S, F> }> {
	const view = withinPages(query, await count());
	const rows = view.total ? await fetch(view.perPage, offsetOf(view)) : [];
	return { rows, view };
}

/**
 * A free-text search as SQL: every word of `q` found in one of `columns` (LIKE, with the
 * pattern's wildcards escaped). Undefined when the search is empty, so it drops out of and().
 */
export function matchesWords(q: string, columns: (AnyColumn | SQL)[]): SQL | undefined {
	const words = q.split(/\s+/).filter(Boolean);
	if (!words.length) return undefined;
	return and(
		...words.map((w) => {
			const pattern = `%${w.replace(/[\\%_]/g, (c) => `\\${c}`)}%`;
			return or(...columns.map((c) => like(c, pattern)));
		})
	);
}
