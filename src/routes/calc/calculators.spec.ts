import { describe, expect, it } from 'vitest';
import { AntechamberCalc, FlushCalc, HumidityCalc, LeakRateCalc } from './calculators.svelte';

// The calculators' state as the page drives it: text in, the API's messages by page field out.
describe('the /calc calculators', () => {
	it('humidity: −60 °C frost point is 10.676 ppmv at 1 atm (Murphy & Koop 2005, REFERENCES.md)', () => {
		const calc = new HumidityCalc();
		calc.values.frostPointC = '-60';
		expect(calc.result?.ppmv).toBeCloseTo(10.676, 2);
		calc.values.frostPointC = '-130';
		expect(calc.result).toBeNull();
		expect(calc.errors).toEqual({ frostPointC: 'frostPointC must be at or above -120 °C' });
		calc.values.frostPointC = '-60';
		calc.values.pressureMbar = '5';
		expect(Object.keys(calc.errors)).toEqual(['pressureMbar']);
	});

	it('leak rate: the class at an exact limit, and each message beside the reading that fed it', () => {
		const calc = new LeakRateCalc();
		calc.values.o2RisePpm = '400';
		calc.values.minutes = '12';
		expect(calc.result).toMatchObject({ hourlyLeakRate: 1e-2, isoClass: 4 });
		calc.requiredClass = 3;
		expect(calc.meets).toBe(false);

		calc.method = 'pressure';
		calc.values.t1C = '-300';
		calc.values.minutes = '0,5';
		expect(calc.result).toBeNull();
		expect(calc.errors).toEqual({
			t1C: 't1K must be above 0 K (−273.15 °C)',
			minutes: 'hours must be at least 1 minute (1/60 h)'
		});
		calc.values.t1C = '20';
		calc.values.minutes = '60';
		calc.values.volumeL = '0';
		// The volume is only for the leak flow: the rate still shows.
		expect(calc.result?.isoClass).toBe(1);
		expect(calc.flow).toBeNull();
		expect(calc.errors).toEqual({
			volumeL: 'volumeL must be from 10 to 100000 L for a glove box'
		});
		calc.readings = 'absolute';
		calc.values.p1Mbar = '1000';
		calc.values.p2Mbar = '1000.5';
		expect(calc.result).toMatchObject({ hourlyLeakRate: 5e-4, isoClass: 1 });
	});

	it('antechamber and flush: pressures in mbar, messages on the page’s fields', () => {
		const ante = new AntechamberCalc();
		expect(ante.result?.pumpDownSeconds).toBeCloseTo(14.4 * Math.log(1013), 6);
		ante.values.lowMbar = '2000';
		expect(Object.keys(ante.errors)).toEqual(['lowMbar']);
		ante.values.lowMbar = '1';
		ante.values.targetPpm = '';
		expect(ante.result?.exactCycles).toBeNull();

		const flush = new FlushCalc();
		flush.values.gloveVolumeL = '2000';
		expect(flush.errors).toEqual({
			gloveVolumeL: 'gloveVolumeL cannot be larger than the box (boxVolumeL)'
		});
	});
});
