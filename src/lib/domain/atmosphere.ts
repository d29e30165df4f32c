// Atmosphere state of a box from its newest O2 and H2O readings.
// Levels are the box's own warn and alarm thresholds (ppm). Common practice for what they
// usually are: below 1 ppm is in spec, a few to 10 ppm means investigate, tens of ppm means
// stop sensitive work and purge (REFERENCES.md, "Rules of the trade").
import type { AtmosphereState } from './boxes';

export type Thresholds = {
	o2WarnPpm: number;
	o2AlarmPpm: number;
	h2oWarnPpm: number;
	h2oAlarmPpm: number;
};

export type Reading = { o2Ppm: number; h2oPpm: number };

/** Highest plausible ppm value: pure oxygen or water vapour would be 10⁶. */
export const MAX_PPM = 1_000_000;

/**
 * The state after a new reading. Above either alarm level: alarm. Under both warn levels:
 * ok. In between: watch, except that an alarm stands until a reading is back under warn,
 * so a box hovering just under its alarm level does not flap in and out of alarm.
 */
export function nextAtmosphereState(
	current: AtmosphereState,
	reading: Reading,
	t: Thresholds
): AtmosphereState {
	if (reading.o2Ppm > t.o2AlarmPpm || reading.h2oPpm > t.h2oAlarmPpm) return 'alarm';
	if (reading.o2Ppm < t.o2WarnPpm && reading.h2oPpm < t.h2oWarnPpm) return 'ok';
	return current === 'alarm' ? 'alarm' : 'watch';
}

/** Where one gas's value stands against its levels: above alarm, at or above warn, or under. */
export function gasLevel(ppm: number, warnPpm: number, alarmPpm: number): 'alarm' | 'warn' | 'ok' {
	if (ppm > alarmPpm) return 'alarm';
	if (ppm >= warnPpm) return 'warn';
	return 'ok';
}

/** Which gases are above which level, in words, for banners and e-mails. */
export function describeReading(reading: Reading, t: Thresholds): string[] {
	const out: string[] = [];
	for (const [gas, ppm, warn, alarm] of [
		['O₂', reading.o2Ppm, t.o2WarnPpm, t.o2AlarmPpm],
		['H₂O', reading.h2oPpm, t.h2oWarnPpm, t.h2oAlarmPpm]
	] as const) {
		const level = gasLevel(ppm, warn, alarm);
		if (level === 'alarm') out.push(`${gas} ${ppm} ppm is above the alarm level of ${alarm} ppm`);
		else if (level === 'warn')
			out.push(`${gas} ${ppm} ppm is at or above the warn level of ${warn} ppm`);
	}
	return out;
}

/** A reading is in spec when both gases are under their warn levels. */
export const inSpec = (reading: Reading, t: Thresholds) =>
	reading.o2Ppm < t.o2WarnPpm && reading.h2oPpm < t.h2oWarnPpm;

/** Problems with one reading's values, as field → message. */
export function checkReading(r: { o2Ppm: unknown; h2oPpm: unknown }): Record<string, string> {
	const problems: Record<string, string> = {};
	for (const [field, label] of [
		['o2Ppm', 'O₂'],
		['h2oPpm', 'H₂O']
	] as const) {
		const v = r[field];
		if (typeof v !== 'number' || !Number.isFinite(v))
			problems[field] = `${label} must be a number of ppm.`;
		else if (v < 0) problems[field] = `${label} cannot be negative.`;
		else if (v > MAX_PPM) problems[field] = `${label} cannot be above 1,000,000 ppm.`;
	}
	return problems;
}
