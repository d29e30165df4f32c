// Free slots to offer someone whose booking was cancelled: same length, within the next
// days, on the same box or on another box they may use. Pure; the caller supplies what
// is busy.
import { local } from './time';

export type Busy = { start: Date; end: Date };
export type Candidate = { boxId: number; boxName: string; busy: Busy[] };
export type Alternative = { boxId: number; boxName: string; start: Date; end: Date };

export type SearchInput = {
	lengthMin: number;
	from: Date;
	until: Date;
	stepMin: number;
	tz: string;
	candidates: Candidate[];
	limit?: number;
	/** Offer daytime slots only (wall clock in the facility zone). */
	dayStartHour?: number;
	dayEndHour?: number;
};

const overlaps = (a: Busy, b: Busy) => a.start < b.end && b.start < a.end;

export function findAlternatives(input: SearchInput): Alternative[] {
	const { lengthMin, stepMin, tz, limit = 3, dayStartHour = 8, dayEndHour = 20 } = input;
	const stepMs = stepMin * 60_000;
	const lengthMs = lengthMin * 60_000;
	// First slot on the step grid at or after `from`.
	const first = Math.ceil(input.from.getTime() / stepMs) * stepMs;
	const found: Alternative[] = [];
	for (const c of input.candidates) {
		let perBox = 0;
		for (let t = first; t + lengthMs <= input.until.getTime() && perBox < limit; t += stepMs) {
			const slot = { start: new Date(t), end: new Date(t + lengthMs) };
			const a = local(slot.start, tz);
			const b = local(slot.end, tz);
			const endHour = b.hour + b.minute / 60;
			if (a.hour < dayStartHour || !a.hasSame(b, 'day') || endHour > dayEndHour) continue;
			if (c.busy.some((x) => overlaps(x, slot))) continue;
			found.push({ boxId: c.boxId, boxName: c.boxName, ...slot });
			perBox++;
			t += lengthMs - stepMs; // the next offer starts after this one
		}
	}
	return found.sort((x, y) => x.start.getTime() - y.start.getTime()).slice(0, limit);
}
