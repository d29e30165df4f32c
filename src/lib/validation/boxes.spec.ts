import { describe, expect, it } from 'vitest';
import { boxSchema } from './boxes';
import { fieldErrors } from './fields';

/** The box form's fields as posted, with the weekly quota in hours. */
const form = (weeklyQuotaHours: unknown) => ({
	name: 'Spec box',
	room: 'T1',
	gas: 'Ar',
	volumeL: '800',
	o2WarnPpm: '1',
	o2AlarmPpm: '10',
	h2oWarnPpm: '1',
	h2oAlarmPpm: '10',
	rateInternal: '0',
	rateExternal: '0',
	slotStepMin: '15',
	minLengthMin: '30',
	maxLengthMin: '240',
	horizonDays: '28',
	purgeMin: '30',
	weeklyQuotaHours
});

const quotaError = (hours: unknown) => {
	const r = boxSchema.safeParse(form(hours));
	return r.success ? undefined : fieldErrors(r.error).weeklyQuotaHours;
};

describe('the weekly quota, entered in hours', () => {
	it('is kept in minutes, decimals and a decimal comma taken', () => {
		expect(boxSchema.parse(form('12')).weeklyQuotaMin).toBe(720);
		expect(boxSchema.parse(form('7.5')).weeklyQuotaMin).toBe(450);
		expect(boxSchema.parse(form('7,5')).weeklyQuotaMin).toBe(450);
		expect(boxSchema.parse(form('0')).weeklyQuotaMin).toBe(0);
		expect(boxSchema.parse(form('168')).weeklyQuotaMin).toBe(10080);
		expect(boxSchema.parse(form('1.67')).weeklyQuotaMin).toBe(100);
		expect('weeklyQuotaHours' in boxSchema.parse(form('12'))).toBe(false);
	});

	it('refuses, under the field people typed in, what is not a week’s hours', () => {
		expect(quotaError('')).toBe('Enter the weekly quota in hours, e.g. 12 or 7.5.');
		expect(quotaError(undefined)).toBe('Enter the weekly quota in hours, e.g. 12 or 7.5.');
		expect(quotaError('twelve')).toBe('Enter the weekly quota in hours, e.g. 12 or 7.5.');
		expect(quotaError('-1')).toBe('The weekly quota cannot be negative.');
		expect(quotaError('169')).toBe('The weekly quota must be at most 168 h.');
	});
});
