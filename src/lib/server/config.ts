// Settings from the environment (.env.example lists them). Read from process.env so
// scripts, tests and the app see the same values.
function required(name: string): string {
	const value = process.env[name];
	if (!value) throw new Error(`${name} is not set; \`npm start\` sets it, or see .env.example.`);
	return value;
}

export const config = {
	databaseUrl: () => required('DATABASE_URL'),
	dbPoolSize: Number(process.env.DB_POOL_SIZE ?? 20),
	facilityTz: process.env.FACILITY_TZ ?? 'Europe/Berlin',
	facilityName: process.env.FACILITY_NAME ?? 'Boxwright facility',
	facilityContact: process.env.FACILITY_CONTACT ?? 'manager@example.org',
	/** Secure cookies whenever the public origin is HTTPS. */
	secureCookies: (process.env.ORIGIN ?? '').startsWith('https://'),
	/** Failed sign-ins allowed per e-mail and address, and per address, in the window. */
	signInLimitPerAccount: Number(process.env.SIGNIN_LIMIT_ACCOUNT ?? 5),
	signInLimitPerAddress: Number(process.env.SIGNIN_LIMIT_ADDRESS ?? 50),
	signInWindowSeconds: Number(process.env.SIGNIN_WINDOW_SECONDS ?? 900)
};
