import { describe, expect, it, vi } from 'vitest';
import { isHttpError, isRedirect } from '@sveltejs/kit';
import type { User } from 'lucia';

// The guard's database query is only used by requirePiOrRole, tested in integration.
vi.mock('./db', () => ({ db: {} }));
const { hasRole, requireRole, requireUser } = await import('./guard');

function event(path: string, user: Partial<User> | null) {
	return {
		url: new URL(`http://localhost${path}`),
		route: { id: path },
		locals: { user: user as User | null, session: null }
	} as Parameters<typeof requireUser>[0];
}

function thrown(fn: () => unknown) {
	try {
		fn();
	} catch (e) {
		return e;
	}
	throw new Error('expected a throw');
}

describe('hasRole', () => {
	it('orders member < trainer < manager < admin', () => {
		expect(hasRole('member', 'member')).toBe(true);
		expect(hasRole('member', 'trainer')).toBe(false);
		expect(hasRole('trainer', 'member')).toBe(true);
		expect(hasRole('manager', 'trainer')).toBe(true);
		expect(hasRole('manager', 'admin')).toBe(false);
		expect(hasRole('admin', 'manager')).toBe(true);
	});
});

describe('requireUser', () => {
	it('returns the signed-in user', () => {
		const user = { id: 7, role: 'member' as const };
		expect(requireUser(event('/', user))).toBe(user);
	});

	it('answers an API call without a session with 401 unauthenticated', () => {
		const e = thrown(() => requireUser(event('/api/me', null)));
		expect(isHttpError(e) && e.status).toBe(401);
		expect(isHttpError(e) && e.body.code).toBe('unauthenticated');
	});

	it('sends a page visit without a session to sign-in, keeping where it was going', () => {
		const e = thrown(() => requireUser(event('/manage/approvals?x=1', null)));
		expect(isRedirect(e) && e.location).toBe('/signin?next=%2Fmanage%2Fapprovals%3Fx%3D1');
	});
});

describe('requireRole', () => {
	it('lets a higher role through', () => {
		expect(requireRole(event('/api/x', { id: 1, role: 'admin' }), 'manager').id).toBe(1);
	});

	it('refuses a lower role with 403 forbidden', () => {
		const e = thrown(() => requireRole(event('/api/x', { id: 1, role: 'trainer' }), 'manager'));
		expect(isHttpError(e) && e.status).toBe(403);
		expect(isHttpError(e) && e.body.code).toBe('forbidden');
	});
});
