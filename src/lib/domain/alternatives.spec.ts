import { describe, expect, it } from 'vitest';
import { findAlternatives } from './alternatives';

const tz = 'Europe/Berlin';
const at = (iso: string) => new Date(iso);

describe('findAlternatives', () => {
	const base = {
		lengthMin: 120,
		from: at('2026-12-02T11:00:00Z'), // 12:00 Berlin
		until: at('2026-12-09T11:00:00Z'),
		stepMin: 15,
		tz
	};

	it('offers the earliest free daytime slots of the same length', () => {
		const slots = findAlternatives({
			...base,
			candidates: [
				{
					boxId: 1,
					boxName: 'Kestrel',
					busy: [{ start: at('2026-12-02T11:00:00Z'), end: at('2026-12-02T15:00:00Z') }]
				}
			]
		});
		// Busy 12:00–16:00 Berlin; next two hours that fit before 20:00 are 16:00–18:00 and 18:00–20:00.
		expect(slots.map((s) => s.start.toISOString())).toEqual([
			'2026-12-02T15:00:00.000Z',
			'2026-12-02T17:00:00.000Z',
			'2026-12-03T07:00:00.000Z'
		]);
		expect(slots.every((s) => s.end.getTime() - s.start.getTime() === 2 * 3_600_000)).toBe(true);
	});

	it('mixes boxes and keeps the earliest three overall', () => {
		const busyDay = { start: at('2026-12-02T00:00:00Z'), end: at('2026-12-03T23:00:00Z') };
		const slots = findAlternatives({
			...base,
			candidates: [
				{ boxId: 1, boxName: 'Kestrel', busy: [busyDay] },
				{ boxId: 3, boxName: 'Tern', busy: [] }
			]
		});
		expect(slots.map((s) => s.boxName)).toEqual(['Tern', 'Tern', 'Tern']);
		expect(slots[0].start.toISOString()).toBe('2026-12-02T11:00:00.000Z');
	});

	it('offers nothing when everything is taken', () => {
		const slots = findAlternatives({
			...base,
			candidates: [{ boxId: 1, boxName: 'Kestrel', busy: [{ start: base.from, end: base.until }] }]
		});
		expect(slots).toEqual([]);
	});
});
