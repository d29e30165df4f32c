// Money: integer cents (hundredths of the facility's currency) everywhere between the
// database and the page. Rates are DECIMAL(10,2) columns; they become cents where they are
// read, from the decimal text, so no binary fraction ever stands for an amount. Pure: no I/O.
//
// Amounts are shown by formatMoney alone, in one fixed locale (en-GB: "€1,234.56"), so the
// server's render and the browser's agree whatever either one's locale is. CSV files carry
// plain decimals (plainAmount: "1234.56"), never a currency sign.

/** The currency when FACILITY_CURRENCY is not set. */
export const DEFAULT_CURRENCY = 'EUR';

const LOCALE = 'en-GB';

/** Digits a decimal amount may carry before the point: beyond this it cannot be a safe integer of cents. */
const MAX_WHOLE_DIGITS = 13;

/**
 * A decimal amount as written ("12.50", "7.35", 12.5) in integer cents, rounded half up
 * (away from zero) on the third decimal: "1.005" → 101. A number is read as its shortest
 * decimal form (String(1.005) is "1.005"), which is what was typed or stored as DECIMAL, not
 * the binary fraction underneath (1.00499999…). Throws on anything that is not a finite
 * decimal number within range.
 */
export function toCents(value: number | string): number {
	if (typeof value === 'number' && !Number.isFinite(value))
		throw new Error(`Not an amount: ${value}.`);
	const text = String(value).trim();
	const m = /^([+-])?(\d*)(?:\.(\d*))?(?:e([+-]?\d+))?$/i.exec(text);
	if (!m || !(m[2] || m[3])) throw new Error(`Not an amount: “${text}”.`);
	const whole = m[2] ?? '';
	const digits = (whole + (m[3] ?? '')).replace(/^0+(?=\d)/, '');
	// Where the cents end in `digits` once the exponent has moved the point.
	const cut = digits.length - (m[3] ?? '').length + Number(m[4] ?? 0) + 2;
	if (cut > MAX_WHOLE_DIGITS + 2) throw new Error(`Amount out of range: “${text}”.`);
	const padded = cut > digits.length ? digits.padEnd(cut, '0') : digits;
	const kept = cut > 0 ? Number(padded.slice(0, cut)) : 0;
	const next = cut >= 0 ? (padded[cut] ?? '0') : '0';
	const cents = kept + (next >= '5' ? 1 : 0);
	return m[1] === '-' && cents !== 0 ? -cents : cents;
}

/** Cents as a plain decimal with two places, for CSV and form fields: 8438 → "84.38". */
export function plainAmount(cents: number): string {
	if (!Number.isSafeInteger(cents)) throw new Error(`Not a whole number of cents: ${cents}.`);
	const abs = Math.abs(cents);
	const units = Math.floor(abs / 100);
	return `${cents < 0 ? '-' : ''}${units}.${String(abs % 100).padStart(2, '0')}`;
}

const formatters = new Map<string, Intl.NumberFormat>();

function formatter(currency: string): Intl.NumberFormat {
	let f = formatters.get(currency);
	if (!f) {
		f = new Intl.NumberFormat(LOCALE, { style: 'currency', currency });
		formatters.set(currency, f);
	}
	return f;
}

/** Cents with the currency, for people: formatMoney(8438, 'EUR') → "€84.38". */
export function formatMoney(cents: number, currency: string): string {
	if (!Number.isSafeInteger(cents)) throw new Error(`Not a whole number of cents: ${cents}.`);
	// cents / 100 is the double nearest the exact amount, well within half a cent of it, so
	// formatting to the currency's two places shows the exact amount.
	return formatter(currency).format(cents / 100);
}

/**
 * Why a currency code cannot be the facility's, or null when it can: an ISO 4217 code the
 * runtime knows, whose minor unit is the cent (EUR, USD, GBP, CHF; not JPY or KWD), since
 * rates are stored to two decimals and amounts kept in hundredths.
 */
export function checkCurrency(code: string): string | null {
	if (!/^[A-Z]{3}$/.test(code)) return `“${code}” is not an ISO 4217 code such as EUR.`;
	if (!Intl.supportedValuesOf('currency').includes(code)) return `${code} is not a known currency.`;
	const places = formatter(code).resolvedOptions().maximumFractionDigits;
	if (places !== 2)
		return `${code} has ${places} decimal places; Boxwright keeps amounts in hundredths, so only a currency with cents will do.`;
	return null;
}
