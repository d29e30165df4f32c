import { describe, expect, it } from 'vitest';
import { absolutePressureProblem, fieldMessages, numberFromText } from './inputs';

describe('fieldMessages', () => {
	it('keeps the first message per field and renames fields a form calls otherwise', () => {
		const problems = [
			{ field: 't1K', message: 't1K must be a number' },
			{ field: 't1K', message: 'a second word on t1K' },
			{ field: 'hours', message: 'hours must be at least 1 minute (1/60 h)' }
		];
		expect(fieldMessages(problems)).toEqual({
			t1K: 't1K must be a number',
			hours: 'hours must be at least 1 minute (1/60 h)'
		});
		expect(fieldMessages(problems, { t1K: 't1C', hours: 'minutes' })).toEqual({
			t1C: 't1K must be a number',
			minutes: 'hours must be at least 1 minute (1/60 h)'
		});
	});
});

describe('absolutePressureProblem', () => {
	it('takes 1 kPa to 1 MPa, its bounds included', () => {
		expect(absolutePressureProblem('p', 1000)).toBeNull();
		expect(absolutePressureProblem('p', 1e6)).toBeNull();
		expect(absolutePressureProblem('p', 999)?.field).toBe('p');
		expect(absolutePressureProblem('p', 1e6 + 1)?.field).toBe('p');
		expect(absolutePressureProblem('p', Number.NaN)?.message).toBe('p must be a number');
		expect(absolutePressureProblem('p', Infinity)?.message).toBe('p must be a number');
	});
});

describe('numberFromText', () => {
	it('reads decimal points and commas; empty or not a number is NaN', () => {
		expect(numberFromText(' -9,5 ')).toBe(-9.5);
		expect(numberFromText('1013.25')).toBe(1013.25);
		expect(numberFromText('')).toBeNaN();
		expect(numberFromText(undefined)).toBeNaN();
		expect(numberFromText('ten')).toBeNaN();
	});
});
