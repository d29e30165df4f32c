import { redirect, type RequestEvent } from '@sveltejs/kit';
import { hasRole, type Role } from '$lib/domain/roles';
import { eq } from 'drizzle-orm';
import { db } from './db';
import { researchGroups } from './db/schema';
import { fail } from './http';

export { hasRole };

type GuardEvent = Pick<RequestEvent, 'locals' | 'url' | 'route'>;

function isApi(event: GuardEvent): boolean {
	return event.url.pathname.startsWith('/api/');
}

/** The API's answer to a request without a valid session. */
export function notSignedIn(): never {
	fail(401, 'Sign in first.', undefined, 'unauthenticated');
}

/** The signed-in user, or 401 (API) / a redirect to sign-in (pages). */
export function requireUser(event: GuardEvent) {
	const user = event.locals.user;
	if (user) return user;
	if (isApi(event)) notSignedIn();
	const next = event.url.pathname + event.url.search;
	redirect(303, `/signin?next=${encodeURIComponent(next)}`);
}

/** The signed-in user holding at least `role`, or 403. */
export function requireRole(event: GuardEvent, role: Role) {
	const user = requireUser(event);
	if (!hasRole(user.role, role)) fail(403, `This needs the ${role} role.`);
	return user;
}

/** A PI of any group, or someone holding at least `role`; otherwise 403. */
export async function requirePiOrRole(event: GuardEvent, role: Role) {
	const user = requireUser(event);
	if (hasRole(user.role, role)) return user;
	const [led] = await db
		.select({ id: researchGroups.id })
		.from(researchGroups)
		.where(eq(researchGroups.piUserId, user.id))
		.limit(1);
	if (!led) fail(403, `This needs a group's PI or the ${role} role.`);
	return user;
}
