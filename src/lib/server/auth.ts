import { DrizzleMySQLAdapter } from '@lucia-auth/adapter-drizzle';
import { Lucia, TimeSpan, type Session, type User } from 'lucia';
import { createHash, randomBytes } from 'node:crypto';
import type { Cookies } from '@sveltejs/kit';
import { and, eq, ne } from 'drizzle-orm';
import { config } from './config';
import { db, pool } from './db';
import { readRows, send } from './db/raw';
import { sessions, users, type Role, type UserStatus } from './db/schema';

const adapter = new DrizzleMySQLAdapter(db, sessions, users);

const SESSION_DAYS = 30;

export const lucia = new Lucia(adapter, {
	sessionExpiresIn: new TimeSpan(SESSION_DAYS, 'd'),
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

/**
 * The session check every request makes (hooks.server.ts), as one plain query on the core
 * pool (db/raw.ts) that reads only what a request needs: never the password hash or the
 * feed token. Lucia's own check went through drizzle's query builder and a wider row; this
 * one took a signed-in endpoint from 0.60 to about 1.0 of a bare node:http endpoint
 * (bench:booking, "floor"). Lucia still makes and ends sessions, and this keeps its rules:
 * an expired session is deleted; one past half its life is extended by SESSION_DAYS. The
 * booking decision reads the same row inside its own first round trip (SessionCheck).
 */
export const SESSION_SQL = `SELECT s.user_id, s.expires_at, u.email, u.name, u.role, u.status
	FROM sessions s JOIN users u ON u.id = s.user_id WHERE s.id = ?`;

/** What the session check reads: the session's end and the person's own columns. */
export type SessionRow = {
	user_id: number;
	expires_at: Date;
	email: string;
	name: string;
	role: Role;
	status: UserStatus;
};

const SESSION_MS = SESSION_DAYS * 86_400_000;

/** The session token the browser sent, when it looks like one. */
export function sessionToken(cookies: Cookies): string | null {
	const token = cookies.get(lucia.sessionCookieName);
	return token && token.length <= 100 ? token : null;
}

/**
 * One request's session check: `judge` decides on the row read (wherever it was read,
 * in its own query or inside the booking decision's first batch), `settle` then does what
 * that owes: the cookie of a session that is over is removed (and the session deleted), a
 * session past half its life is extended.
 */
export class SessionCheck {
	readonly sessionId: string;
	user: User | null = null;
	session: Session | null = null;
	private ended = false;

	constructor(
		private readonly cookies: Cookies,
		private readonly token: string,
		private readonly now = new Date()
	) {
		this.sessionId = sessionIdFor(token);
	}

	/** The signed-in person, or null: no session, an expired one, or an account not active. */
	judge(row: SessionRow | undefined): User | null {
		if (!row || row.status !== 'active' || row.expires_at <= this.now) {
			this.ended = Boolean(row);
			this.cookies.delete(lucia.sessionCookieName, { path: '/' });
			return null;
		}
		const { email, name, role, status } = row;
		this.user = { id: row.user_id, email, name, role, status };
		this.session = {
			id: this.sessionId,
			userId: row.user_id,
			expiresAt: row.expires_at,
			fresh: false
		};
		return this.user;
	}

	async settle() {
		if (this.ended) await lucia.invalidateSession(this.sessionId);
		const session = this.session;
		if (!session || session.expiresAt.getTime() - this.now.getTime() >= SESSION_MS / 2) return;
		session.expiresAt = new Date(this.now.getTime() + SESSION_MS);
		session.fresh = true;
		await send(pool.pool, 'UPDATE sessions SET expires_at = ? WHERE id = ?', [
			session.expiresAt,
			this.sessionId
		]);
		setCookie(this.cookies, this.token, session.expiresAt);
	}
}

/** Reads the session cookie; refreshes the cookie when the session was extended. */
export async function readSession(
	cookies: Cookies,
	now = new Date()
): Promise<{ user: User | null; session: Session | null }> {
	const token = sessionToken(cookies);
	if (!token) return { user: null, session: null };
	const check = new SessionCheck(cookies, token, now);
	const [row] = await readRows<SessionRow>(pool.pool, SESSION_SQL, [check.sessionId]);
	check.judge(row);
	await check.settle();
	return { user: check.user, session: check.session };
}

export async function endSession(cookies: Cookies, sessionId: string | undefined) {
	if (sessionId) await lucia.invalidateSession(sessionId);
	cookies.delete(lucia.sessionCookieName, { path: '/' });
}

/** Ends every session of the user except the one given (after a password change). */
export async function endOtherSessions(userId: number, keepSessionId: string) {
	await db.delete(sessions).where(and(eq(sessions.userId, userId), ne(sessions.id, keepSessionId)));
}
