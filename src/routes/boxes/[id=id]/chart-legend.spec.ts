import { describe, expect, it } from 'vitest';
import type { Series } from '$lib/domain/readings-chart';
import { legendLine } from './chart-legend';

const tz = 'Europe/Berlin';
const now = new Date('2026-12-02T15:00:00Z');
const at = (iso: string) => Date.parse(iso) / 1000;

const raw: Series = {
	bucketSeconds: 0,
	t: [at('2026-12-02T12:05:00Z'), at('2026-12-02T13:05:00Z')],
	o2: [0.4, 0.45],
	h2o: [0.6, 0.625],
	o2Min: [0.4, 0.45],
	h2oMin: [0.6, 0.625],
	count: 2,
	latest: { t: at('2026-12-02T13:05:00Z'), o2: 0.45, h2o: 0.625 }
};

describe('legendLine', () => {
	it('shows the newest reading and its 24-hour time when idle', () => {
		expect(legendLine(raw, null, tz, now)).toEqual({
			when: 'Latest 14:05',
			o2: '0.45',
			h2o: '0.625'
		});
	});

	it('names the day of a newest reading from before today', () => {
		const old = { ...raw, latest: { t: at('2026-11-30T19:30:00Z'), o2: 0.4, h2o: 0.6 } };
		expect(legendLine(old, null, tz, now)?.when).toBe('Latest Mon 30 Nov, 20:30');
	});

	it('shows the point under the cursor on the 24-hour clock', () => {
		expect(legendLine(raw, 0, tz, now)).toEqual({
			when: 'Wed 2 Dec, 13:05',
			o2: '0.4',
			h2o: '0.6'
		});
	});

	it('shows a bucket as its span and its lowest–highest', () => {
		const buckets: Series = {
			...raw,
			bucketSeconds: 21_600,
			t: [at('2026-12-02T05:00:00Z')],
			o2: [0.7],
			o2Min: [0.3],
			h2o: [0.5],
			h2oMin: [0.5]
		};
		expect(legendLine(buckets, 0, tz, now)).toEqual({
			when: 'Wed 2 Dec, 06:00–12:00',
			o2: '0.3–0.7',
			h2o: '0.5'
		});
	});

	it('has nothing to say, rather than placeholders, without readings', () => {
		expect(legendLine({ ...raw, t: [], latest: null }, null, tz, now)).toBeNull();
	});
});
