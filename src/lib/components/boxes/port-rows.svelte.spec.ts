import { describe, expect, it } from 'vitest';
import { PortRows, type GivenPort } from './port-rows.svelte';

describe('PortRows', () => {
	it('is seeded once: rows added and removed stay when the values change', () => {
		// The page's values, as a parent re-rendering with a form's answer would change them.
		let values: GivenPort[] = [
			{ id: 11, position: 'front-left', diameterMm: 200 },
			{ id: 12, position: 'front-right', diameterMm: 200 }
		];
		const list = new PortRows(values);
		list.add();
		expect(list.rows.map((r) => r.id)).toEqual(['11', '12', '']);
		values = [...values, { id: 13, position: 'second-left', diameterMm: 150 }];
		expect(values).toHaveLength(3);
		expect(list.rows).toHaveLength(3);
		list.remove(list.rows[0].key);
		expect(list.rows.map((r) => [r.id, r.position, r.diameterMm])).toEqual([
			['12', 'front-right', '200'],
			['', '', '200']
		]);
	});

	it('starts a new box with the two front ports, and gives every row its own key', () => {
		const list = new PortRows([]);
		list.add();
		list.add();
		list.remove(list.rows[2].key);
		expect(list.rows.map((r) => r.position)).toEqual(['front-left', 'front-right', '']);
		expect(new Set(list.rows.map((r) => r.key)).size).toBe(3);
	});
});
