import { describe, expect, it } from 'vitest';
import { certificationState, standing, standingByPersonAndModule } from './certifications';

const now = new Date('2026-12-01T12:00:00Z');
const cert = (granted: string, expires: string, revoked: string | null = null) => ({
	grantedAt: new Date(granted),
	expiresAt: new Date(expires),
	revokedAt: revoked ? new Date(revoked) : null
});

describe('standing in a module', () => {
	it('an older live grant is not hidden by a newer revoked one', () => {
		const old = cert('2026-06-01', '2027-06-01');
		const revoked = cert('2026-11-01', '2027-11-01', '2026-11-15');
		expect(standing([revoked, old], now)).toBe(old);
		expect(certificationState(standing([revoked, old], now), now)).toBe('current');
	});
	it('with nothing live, the newest grant says why', () => {
		const lapsed = cert('2025-01-01', '2026-01-01');
		const revoked = cert('2026-02-01', '2027-02-01', '2026-03-01');
		expect(certificationState(standing([lapsed, revoked], now), now)).toBe('revoked');
		expect(standing([], now)).toBeUndefined();
	});
	it('keys each person and module apart', () => {
		const a = { ...cert('2026-06-01', '2026-12-20'), userId: 1, moduleId: 7 };
		const b = { ...cert('2026-06-01', '2027-06-01'), userId: 2, moduleId: 7 };
		const map = standingByPersonAndModule([a, b], now);
		expect(certificationState(map.get('1:7'), now)).toBe('expiring');
		expect(certificationState(map.get('2:7'), now)).toBe('current');
	});
});
