// Settings from the environment (.env.example lists them). Read from process.env so
// scripts, tests and the app see the same values.
import { DEFAULT_CURRENCY, checkCurrency } from '../domain/money';

function required(name: string): string {
	const value = process.env[name];
	if (!value) throw new Error(`${name} is not set; \`npm start\` sets it, or see .env.example.`);
	return value;
}

/** FACILITY_CURRENCY, checked at start-up: a mistyped code stops the app, not a statement. */
function currency(): string {
	const code = (process.env.FACILITY_CURRENCY || DEFAULT_CURRENCY).trim().toUpperCase();
	const problem = checkCurrency(code);
	if (problem) throw new Error(`FACILITY_CURRENCY: ${problem}`);
	return code;
}

export const config = {
	databaseUrl: () => required('DATABASE_URL'),
	dbPoolSize: Number(process.env.DB_POOL_SIZE ?? 20),
	facilityTz: process.env.FACILITY_TZ ?? 'Europe/Berlin',
	facilityName: process.env.FACILITY_NAME ?? 'Boxwright facility',
	facilityContact: process.env.FACILITY_CONTACT ?? 'manager@example.org',
	/** ISO 4217 code of the facility's currency (one with cents); amounts are kept in cents. */
	facilityCurrency: currency(),
	/** Secure cookies whenever the public origin is HTTPS. */
	secureCookies: (process.env.ORIGIN ?? '').startsWith('https://'),
	/** Failed sign-ins allowed per e-mail and address, and per address, in the window. */
	signInLimitPerAccount: Number(process.env.SIGNIN_LIMIT_ACCOUNT ?? 5),
	signInLimitPerAddress: Number(process.env.SIGNIN_LIMIT_ADDRESS ?? 50),
	signInWindowSeconds: Number(process.env.SIGNIN_WINDOW_SECONDS ?? 900)
};
