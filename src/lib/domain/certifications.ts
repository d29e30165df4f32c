// Where a person stands in a training module, from the certifications they hold in it.

export type CertificationState = 'current' | 'expiring' | 'expired' | 'revoked' | 'none';

/** Within this many days of expiry a certification shows as expiring. */
export const EXPIRY_WARNING_DAYS = 30;

type Cert = { grantedAt: Date; expiresAt: Date; revokedAt: Date | null };

export function certificationState(cert: Cert | undefined, now = new Date()): CertificationState {
	if (!cert) return 'none';
	if (cert.revokedAt) return 'revoked';
	if (cert.expiresAt <= now) return 'expired';
	if (cert.expiresAt.getTime() - now.getTime() < EXPIRY_WARNING_DAYS * 86_400_000)
		return 'expiring';
	return 'current';
}

/**
 * The certification that says where a person stands in one module: the newest grant still
 * live (not revoked, not expired), else the newest grant. A newer revoked or lapsed grant
 * does not hide an older one that is still good.
 */
export function standing<C extends Cert>(certs: C[], now = new Date()): C | undefined {
	const newestFirst = [...certs].sort((a, b) => b.grantedAt.getTime() - a.grantedAt.getTime());
	return newestFirst.find((c) => !c.revokedAt && c.expiresAt > now) ?? newestFirst[0];
}

/** Each (person, module)'s standing certification, keyed `${userId}:${moduleId}`. */
export function standingByPersonAndModule<C extends Cert & { userId: number; moduleId: number }>(
	certs: C[],
	now = new Date()
): Map<string, C> {
	const groups = new Map<string, C[]>();
	for (const c of certs) {
		const key = `${c.userId}:${c.moduleId}`;
		groups.set(key, [...(groups.get(key) ?? []), c]);
	}
	return new Map([...groups].map(([key, list]) => [key, standing(list, now)!]));
}
