import { DrizzleMySQLAdapter } from '@lucia-auth/adapter-drizzle';
import { Lucia, TimeSpan, type DatabaseSession, type DatabaseUser } from 'lucia';
import { createHash, randomBytes } from 'node:crypto';
import type { Cookies } from '@sveltejs/kit';
import { and, eq, ne } from 'drizzle-orm';
import { config } from './config';
import { db } from './db';
import { sessions, users, type Role, type UserStatus } from './db/schema';

/**
 * Lucia's Drizzle adapter, except that the session check on every request reads only the
 * user's columns Lucia passes on (getUserAttributes), not the password hash or the feed
 * token's: the same one statement, a narrower row.
 */
class SessionAdapter extends DrizzleMySQLAdapter {
	override async getSessionAndUser(
		sessionId: string
	): Promise<[DatabaseSession | null, DatabaseUser | null]> {
		const rows = await db
			.select({
				id: sessions.id,
				userId: sessions.userId,
				expiresAt: sessions.expiresAt,
				email: users.email,
				name: users.name,
				role: users.role,
				status: users.status
			})
			.from(sessions)
			.innerJoin(users, eq(users.id, sessions.userId))
			.where(eq(sessions.id, sessionId));
		if (rows.length !== 1) return [null, null];
		const { id, userId, expiresAt, ...attributes } = rows[0];
		return [
			{ id, userId, expiresAt, attributes: {} },
			{ id: userId, attributes }
		];
	}
}

const adapter = new SessionAdapter(db, sessions, users);

export const lucia = new Lucia(adapter, {
	sessionExpiresIn: new TimeSpan(30, 'd'),
	sessionCookie: {
		name: 'bw_session',
		attributes: { secure: config.secureCookies, sameSite: 'lax' }
	},
	getUserAttributes: (row) => ({
		email: row.email,
		name: row.name,
		role: row.role,
		status: row.status
	})
});

declare module 'lucia' {
	interface Register {
		Lucia: typeof lucia;
		UserId: number;
		DatabaseUserAttributes: { email: string; name: string; role: Role; status: UserStatus };
	}
}

/** The cookie carries a random token; the database keeps only its SHA-256. */
function sessionIdFor(token: string): string {
	return createHash('sha256').update(token).digest('hex');
}

/**
 * Signs the browser in with a new session. The one its cookie held until now, whoever it
 * belonged to, ends here: a new sign-in never leaves the old session usable (by someone
 * who copied the cookie, or on a shared computer).
 */
export async function startSession(cookies: Cookies, userId: number): Promise<string> {
	const previous = cookies.get(lucia.sessionCookieName);
	if (previous && previous.length <= 100) await lucia.invalidateSession(sessionIdFor(previous));
	const token = randomBytes(32).toString('base64url');
	const session = await lucia.createSession(userId, {}, { sessionId: sessionIdFor(token) });
	setCookie(cookies, token, session.expiresAt);
	return session.id;
}

function setCookie(cookies: Cookies, token: string, expiresAt: Date) {
	const cookie = lucia.createSessionCookie(token);
	cookies.set(cookie.name, cookie.value, { ...cookie.attributes, path: '/', expires: expiresAt });
}

/** Reads the session cookie; refreshes it when Lucia extended the session. */
export async function readSession(cookies: Cookies) {
	const token = cookies.get(lucia.sessionCookieName);
	if (!token || token.length > 100) return { user: null, session: null };
	const { session, user } = await lucia.validateSession(sessionIdFor(token));
	if (!session || !user || user.status !== 'active') {
		cookies.delete(lucia.sessionCookieName, { path: '/' });
		if (session) await lucia.invalidateSession(session.id);
		return { user: null, session: null };
	}
	if (session.fresh) setCookie(cookies, token, session.expiresAt);
	return { user, session };
}

export async function endSession(cookies: Cookies, sessionId: string | undefined) {
	if (sessionId) await lucia.invalidateSession(sessionId);
	cookies.delete(lucia.sessionCookieName, { path: '/' });
}

/** Ends every session of the user except the one given (after a password change). */
export async function endOtherSessions(userId: number, keepSessionId: string) {
	await db.delete(sessions).where(and(eq(sessions.userId, userId), ne(sessions.id, keepSessionId)));
}
