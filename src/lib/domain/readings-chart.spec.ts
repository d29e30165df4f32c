import { describe, expect, it } from 'vitest';
import {
	bucketOf,
	bucketPlan,
	bucketStart,
	formatPpm,
	formatSpread,
	MAX_POINTS,
	niceStep,
	yRange
} from './readings-chart';

const levels = { warn: 1, alarm: 10 };
const day = 86_400_000;

describe('bucketPlan', () => {
	const from = new Date('2026-01-01T00:00:00Z');
	const plan = (days: number, tz = 'UTC') =>
		bucketPlan(from, new Date(from.getTime() + days * day), tz);

	it('picks the smallest round bucket that keeps a range under the cap', () => {
		expect(plan(1).bucketSeconds).toBe(60);
		expect(plan(7).bucketSeconds).toBe(600);
		expect(plan(30).bucketSeconds).toBe(1_800);
		expect(plan(365).bucketSeconds).toBe(21_600);
		expect(plan(366).bucketSeconds).toBe(21_600);
	});

	it('never exceeds the cap, however the range falls on bucket edges', () => {
		for (const days of [1, 2, 7, 30, 31, 90, 365, 400, 2_000]) {
			const to = new Date(from.getTime() + days * day + 1_234_000);
			const shifted = new Date(from.getTime() + 1_234_000);
			const p = bucketPlan(shifted, to, 'Europe/Berlin');
			const first = bucketOf(shifted.getTime() / 1000, p);
			const last = bucketOf((to.getTime() - 1) / 1000, p);
			expect(last - first + 1).toBeLessThanOrEqual(MAX_POINTS);
		}
	});

	it('starts buckets on the facility clock', () => {
		// Europe/Berlin is UTC+1 in January: six-hour buckets begin at 00:00, 06:00… there.
		const p = bucketPlan(from, new Date(from.getTime() + 365 * day), 'Europe/Berlin');
		expect(p.offsetSeconds).toBe(3_600);
		const at = Date.parse('2026-01-10T08:30:00+01:00') / 1000;
		expect(new Date(bucketStart(bucketOf(at, p), p) * 1000).toISOString()).toBe(
			'2026-01-10T05:00:00.000Z'
		);
	});
});

describe('yRange', () => {
	it('follows readings of 0.3–0.7 ppm instead of a fixed 0–10, taking in a warn level close above', () => {
		expect(yRange({ min: 0.3, max: 0.7 }, levels)).toEqual([0, 1.2]);
	});

	it('leaves out levels far above the data', () => {
		const [lo, hi] = yRange({ min: 0.3, max: 0.7 }, { warn: 5, alarm: 50 });
		expect(lo).toBe(0.2);
		expect(hi).toBe(0.8);
	});

	it('keeps a spike in view with headroom', () => {
		const [lo, hi] = yRange({ min: 0.3, max: 50 }, levels);
		expect(lo).toBe(0);
		expect(hi).toBeGreaterThan(50);
		expect(hi).toBeLessThanOrEqual(60);
	});

	it('gives a flat series some height', () => {
		const [lo, hi] = yRange({ min: 4, max: 4 }, levels);
		expect(lo).toBeLessThan(4);
		expect(hi).toBeGreaterThan(4);
	});

	it('shows up to the warn level when there is no data', () => {
		const [lo, hi] = yRange(null, levels);
		expect(lo).toBe(0);
		expect(hi).toBeGreaterThanOrEqual(1);
	});

	it('spans whole decades on a log axis, holding both levels', () => {
		expect(yRange({ min: 0.3, max: 0.7 }, levels, true)).toEqual([0.1, 100]);
		expect(yRange({ min: 0, max: 0.7 }, levels, true)[0]).toBe(0.01);
	});
});

describe('numbers for the legend', () => {
	it('writes ppm as stored, without trailing zeros', () => {
		expect(formatPpm(0.4)).toBe('0.4');
		expect(formatPpm(12.125)).toBe('12.125');
		expect(formatPpm(0.1 + 0.2)).toBe('0.3');
		expect(formatSpread(0.3, 0.7)).toBe('0.3–0.7');
		expect(formatSpread(0.5, 0.5)).toBe('0.5');
	});

	it('steps by 1, 2 or 5', () => {
		expect(niceStep(0.168)).toBe(0.2);
		expect(niceStep(3)).toBe(5);
		expect(niceStep(11.9)).toBe(20);
	});
});
