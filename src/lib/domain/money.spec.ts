import { describe, expect, it } from 'vitest';
import { DEFAULT_CURRENCY, checkCurrency, formatMoney, plainAmount, toCents } from './money';

// Currency codes and their minor units are ISO 4217's (as the runtime's ICU data has them).

describe('decimal amounts into cents', () => {
	it('reads DECIMAL(10,2) text exactly', () => {
		expect(toCents('12.50')).toBe(1250);
		expect(toCents('7.35')).toBe(735);
		expect(toCents('0.00')).toBe(0);
		expect(toCents('0.01')).toBe(1);
		expect(toCents('100000.00')).toBe(10_000_000);
		expect(toCents('99999999.99')).toBe(9_999_999_999);
		expect(toCents(' 8.40 ')).toBe(840);
	});

	it('reads a number as its shortest decimal form, not its binary fraction', () => {
		expect(toCents(12.5)).toBe(1250);
		expect(toCents(8.4)).toBe(840);
		// 1.005 and 2.675 are held as 1.00499… and 2.67499…; as written they round up.
		expect(toCents(1.005)).toBe(101);
		expect(toCents(2.675)).toBe(268);
		expect(toCents(0.1 + 0.2)).toBe(30);
		expect(toCents(1e-7)).toBe(0);
		expect(toCents(5e-3)).toBe(1);
		expect(toCents(0)).toBe(0);
	});

	it('rounds half up on the third decimal, away from zero below it', () => {
		expect(toCents('1.005')).toBe(101);
		expect(toCents('1.004999')).toBe(100);
		expect(toCents('0.004')).toBe(0);
		expect(toCents('0.995')).toBe(100);
		expect(toCents('-1.005')).toBe(-101);
		expect(Object.is(toCents('-0.004'), 0)).toBe(true);
		expect(toCents('.5')).toBe(50);
		expect(toCents('5.')).toBe(500);
		expect(toCents('1.5e2')).toBe(15_000);
	});

	it('refuses what is not an amount, or too large to be one', () => {
		for (const bad of ['', '.', 'abc', '1.2.3', '1,50', '€1', '12.50 EUR', '1e400'])
			expect(() => toCents(bad), bad).toThrow();
		expect(() => toCents(Number.NaN)).toThrow(/amount/);
		expect(() => toCents(Number.POSITIVE_INFINITY)).toThrow(/amount/);
		expect(() => toCents(1e21)).toThrow(/range/);
	});
});

describe('cents written out', () => {
	it('as a plain decimal for CSV, without a currency', () => {
		expect(plainAmount(8438)).toBe('84.38');
		expect(plainAmount(5)).toBe('0.05');
		expect(plainAmount(0)).toBe('0.00');
		expect(plainAmount(100)).toBe('1.00');
		expect(plainAmount(7_449_999_255)).toBe('74499992.55');
		expect(plainAmount(-5)).toBe('-0.05');
		expect(() => plainAmount(1.5)).toThrow(/cents/);
	});

	it('with the currency for people, the same in every locale', () => {
		expect(formatMoney(8438, 'EUR')).toBe('€84.38');
		expect(formatMoney(0, 'EUR')).toBe('€0.00');
		expect(formatMoney(123_456_789, 'EUR')).toBe('€1,234,567.89');
		expect(formatMoney(8438, 'GBP')).toBe('£84.38');
		// A code before the amount is joined to it by a no-break space, so it never wraps alone.
		expect(formatMoney(8438, 'CHF')).toBe('CHF\u00a084.38');
		expect(() => formatMoney(0.5, 'EUR')).toThrow(/cents/);
	});
});

describe('the facility currency', () => {
	it('is EUR by default', () => {
		expect(DEFAULT_CURRENCY).toBe('EUR');
		expect(checkCurrency(DEFAULT_CURRENCY)).toBeNull();
	});

	it('is an ISO 4217 code with cents', () => {
		for (const ok of ['EUR', 'USD', 'GBP', 'CHF', 'SEK']) expect(checkCurrency(ok), ok).toBeNull();
		expect(checkCurrency('eur')).toMatch(/ISO 4217/);
		expect(checkCurrency('EURO')).toMatch(/ISO 4217/);
		expect(checkCurrency('€')).toMatch(/ISO 4217/);
		expect(checkCurrency('XYZ')).toMatch(/not a known currency/);
		// The yen has no minor unit and the Kuwaiti dinar three decimals.
		expect(checkCurrency('JPY')).toMatch(/0 decimal places/);
		expect(checkCurrency('KWD')).toMatch(/3 decimal places/);
	});
});
