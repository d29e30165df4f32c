import { describe, expect, it } from 'vitest';
import { checkAction, checkInRefusal, checkOutRefusal, checkPrompt } from './checkins';

const start = new Date('2026-12-02T09:00:00Z');
const end = new Date('2026-12-02T11:00:00Z');
const at = (iso: string) => new Date(iso);
const booking = (extra = {}) => ({
	status: 'confirmed',
	startAt: start,
	endAt: end,
	checkInAt: null,
	checkOutAt: null,
	...extra
});

describe('check-in and check-out', () => {
	it('opens check-in 15 minutes before the start and closes it at the end', () => {
		expect(checkInRefusal(booking(), at('2026-12-02T08:44:00Z'))).toMatch(/opens 15 minutes/);
		expect(checkInRefusal(booking(), at('2026-12-02T08:45:00Z'))).toBeNull();
		expect(checkInRefusal(booking(), at('2026-12-02T11:00:00Z'))).toMatch(/ended/);
		expect(checkInRefusal(booking({ status: 'cancelled' }), at('2026-12-02T09:00:00Z'))).toMatch(
			/cancelled/
		);
	});
	it('checks out after a check-in, up to 12 hours past the end', () => {
		const inside = booking({ checkInAt: at('2026-12-02T09:02:00Z') });
		expect(checkOutRefusal(booking(), at('2026-12-02T10:00:00Z'))).toBe('Check in first.');
		expect(checkOutRefusal(inside, at('2026-12-02T23:00:00Z'))).toBeNull();
		expect(checkOutRefusal(inside, at('2026-12-02T23:00:01Z'))).toMatch(/closes 12 hours/);
	});
	it('prompts a check-in around the start and a check-out around the end', () => {
		expect(checkPrompt(booking(), at('2026-12-02T08:30:00Z'))).toBeNull();
		expect(checkPrompt(booking(), at('2026-12-02T08:50:00Z'))).toBe('check_in');
		const inside = booking({ checkInAt: at('2026-12-02T09:02:00Z') });
		expect(checkPrompt(inside, at('2026-12-02T10:00:00Z'))).toBeNull();
		expect(checkPrompt(inside, at('2026-12-02T10:50:00Z'))).toBe('check_out');
		expect(
			checkPrompt({ ...inside, checkOutAt: at('2026-12-02T10:55:00Z') }, at('2026-12-02T11:00:00Z'))
		).toBeNull();
	});
});

describe('checkAction', () => {
	it('offers check-in from 15 minutes before the start, then check-out, then nothing', () => {
		expect(checkAction(booking(), at('2026-12-02T08:40:00Z'))).toBeNull();
		expect(checkAction(booking(), at('2026-12-02T08:50:00Z'))).toBe('in');
		const inside = booking({ checkInAt: at('2026-12-02T09:02:00Z') });
		expect(checkAction(inside, at('2026-12-02T09:30:00Z'))).toBe('out');
		expect(
			checkAction({ ...inside, checkOutAt: at('2026-12-02T10:55:00Z') }, at('2026-12-02T11:00:00Z'))
		).toBeNull();
	});
});
