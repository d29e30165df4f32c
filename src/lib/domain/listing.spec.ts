import { describe, expect, it } from 'vitest';
import { listHref, listInMemory, rangeWords, readListQuery, withinPages } from './listing';

const spec = {
	sorts: ['when', 'box'],
	defaultSort: 'when',
	defaultDir: 'desc',
	filters: { status: ['done', 'cancelled'] },
	perPage: 2
} as const;

const read = (q: string, extra: Partial<typeof spec> & { prefix?: string } = {}) =>
	readListQuery(new URLSearchParams(q), { ...spec, ...extra });

describe('a list view read from the address', () => {
	it('falls back to the default for a column, direction, page or filter that does not exist', () => {
		expect(read('sort=price&dir=sideways&page=-3&status=lost')).toMatchObject({
			sort: 'when',
			dir: 'desc',
			page: 1,
			filters: {}
		});
		expect(read('page=2.5').page).toBe(1);
	});

	it('takes a known column ascending unless told otherwise, and keeps known filters', () => {
		expect(read('sort=box&status=done&q=%20kestrel%20')).toMatchObject({
			sort: 'box',
			dir: 'asc',
			filters: { status: 'done' },
			q: 'kestrel'
		});
	});

	it('keeps two lists on one page apart by their prefix', () => {
		const q = read('sort=box&past.sort=box&past.page=3', { prefix: 'past' });
		expect(q).toMatchObject({ sort: 'box', page: 3, prefix: 'past' });
		expect(read('past.sort=box').sort).toBe('when');
	});

	it('brings a page past the end back to the last page', () => {
		expect(withinPages(read('page=9'), 5)).toMatchObject({ page: 3, pages: 3, total: 5 });
		expect(withinPages(read('page=9'), 0)).toMatchObject({ page: 1, pages: 1 });
	});
});

describe('addresses of other views', () => {
	const here = new URLSearchParams('sort=box&page=3&past.page=2');
	it('starts a new sort on page one and keeps the other list’s parameters', () => {
		expect(listHref(here, { prefix: '' }, { sort: 'when', dir: 'asc' })).toBe(
			'?sort=when&past.page=2&dir=asc'
		);
	});
	it('drops page 1 and empty values', () => {
		expect(listHref(here, { prefix: 'past' }, { page: 1 })).toBe('?sort=box&page=3');
		expect(listHref(here, { prefix: '' }, { sort: '' })).toBe('?past.page=2');
	});
});

describe('sorting, searching and paging in memory', () => {
	const rows = [
		{ id: 1, box: 'Tern', when: new Date('2026-11-02'), status: 'done' },
		{ id: 2, box: 'kestrel', when: new Date('2026-11-04'), status: 'cancelled' },
		{ id: 3, box: 'Heron', when: new Date('2026-11-03'), status: 'done' },
		{ id: 4, box: '', when: new Date('2026-11-01'), status: 'done' }
	];
	const options = {
		sortBy: {
			when: (r: (typeof rows)[number]) => r.when,
			box: (r: (typeof rows)[number]) => r.box
		},
		text: (r: (typeof rows)[number]) => r.box,
		filter: { status: (r: (typeof rows)[number], v: string) => r.status === v }
	};

	it('sorts by the chosen column, ignoring case, with empty values last either way', () => {
		const asc = listInMemory(rows, { ...read('sort=box'), perPage: 10 }, options);
		expect(asc.rows.map((r) => r.id)).toEqual([3, 2, 1, 4]);
		const desc = listInMemory(rows, { ...read('sort=box&dir=desc'), perPage: 10 }, options);
		expect(desc.rows.map((r) => r.id)).toEqual([1, 2, 3, 4]);
	});

	it('filters and searches before paging, and counts what is left', () => {
		const done = listInMemory(rows, read('status=done'), options);
		expect(done.view).toMatchObject({ total: 3, pages: 2 });
		expect(done.rows.map((r) => r.id)).toEqual([3, 1]);
		expect(listInMemory(rows, read('q=KEST'), options).rows.map((r) => r.id)).toEqual([2]);
	});

	it('words the range shown, with thousands grouped', () => {
		expect(rangeWords(withinPages(read('page=2'), 5), 2)).toBe('3–4 of 5');
		expect(rangeWords(withinPages({ ...read(''), perPage: 50 }, 524_274), 50)).toBe(
			'1–50 of 524,274'
		);
		expect(rangeWords(withinPages(read(''), 2), 2)).toBe('2 in all');
		expect(rangeWords(withinPages(read(''), 0), 0)).toBe('None');
	});
});
