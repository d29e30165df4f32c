import { describe, expect, it } from 'vitest';
import { checkReading, describeReading, gasLevel, inSpec, nextAtmosphereState } from './atmosphere';

const t = { o2WarnPpm: 1, o2AlarmPpm: 10, h2oWarnPpm: 1, h2oAlarmPpm: 10 };

describe('nextAtmosphereState', () => {
	it('goes into alarm above either alarm level', () => {
		expect(nextAtmosphereState('ok', { o2Ppm: 10.1, h2oPpm: 0.2 }, t)).toBe('alarm');
		expect(nextAtmosphereState('watch', { o2Ppm: 0.2, h2oPpm: 12 }, t)).toBe('alarm');
	});
	it('stays out of alarm at exactly the alarm level', () => {
		expect(nextAtmosphereState('ok', { o2Ppm: 10, h2oPpm: 0.2 }, t)).toBe('watch');
	});
	it('holds an alarm until a reading is under both warn levels', () => {
		expect(nextAtmosphereState('alarm', { o2Ppm: 5, h2oPpm: 0.2 }, t)).toBe('alarm');
		expect(nextAtmosphereState('alarm', { o2Ppm: 0.5, h2oPpm: 1 }, t)).toBe('alarm');
		expect(nextAtmosphereState('alarm', { o2Ppm: 0.5, h2oPpm: 0.9 }, t)).toBe('ok');
	});
	it('watches between warn and alarm, and clears under warn', () => {
		expect(nextAtmosphereState('ok', { o2Ppm: 3, h2oPpm: 0.2 }, t)).toBe('watch');
		expect(nextAtmosphereState('watch', { o2Ppm: 0.3, h2oPpm: 0.2 }, t)).toBe('ok');
	});
});

describe('readings', () => {
	it('says in words what is out of spec', () => {
		expect(describeReading({ o2Ppm: 12, h2oPpm: 2 }, t)).toEqual([
			'O₂ 12 ppm is above the alarm level of 10 ppm',
			'H₂O 2 ppm is at or above the warn level of 1 ppm'
		]);
		expect(inSpec({ o2Ppm: 0.4, h2oPpm: 0.3 }, t)).toBe(true);
	});
	it('places one gas against its levels: warn counts from the level, alarm above it', () => {
		expect(gasLevel(0.99, 1, 10)).toBe('ok');
		expect(gasLevel(1, 1, 10)).toBe('warn');
		expect(gasLevel(10, 1, 10)).toBe('warn');
		expect(gasLevel(10.01, 1, 10)).toBe('alarm');
	});
	it('refuses negative, huge and non-numeric values', () => {
		expect(checkReading({ o2Ppm: -1, h2oPpm: 2e6 })).toEqual({
			o2Ppm: 'O₂ cannot be negative.',
			h2oPpm: 'H₂O cannot be above 1,000,000 ppm.'
		});
		expect(checkReading({ o2Ppm: Number.NaN, h2oPpm: '1' })).toEqual({
			o2Ppm: 'O₂ must be a number of ppm.',
			h2oPpm: 'H₂O must be a number of ppm.'
		});
		expect(checkReading({ o2Ppm: 0, h2oPpm: 0.5 })).toEqual({});
	});
});
