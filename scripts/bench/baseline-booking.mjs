// The benchmark's baseline: a bare node:http endpoint doing the same locked insert as
// Boxwright's booking service (lock the box row, look for overlaps, insert), no framework.
import { createServer } from 'node:http';
import mysql from 'mysql2/promise';

const pool = mysql.createPool({
	uri: process.env.DATABASE_URL,
	connectionLimit: 20,
	timezone: 'Z'
});
const port = Number(process.env.PORT);
/** LONGEST_HOLD_MS of src/lib/domain/bookings.ts: the longest booking (7 days) and purge (12 h). */
const LONGEST_HOLD_MS = 7.5 * 86_400_000;

const server = createServer(async (req, res) => {
	let raw = '';
	for await (const chunk of req) raw += chunk;
	let body;
	try {
		body = JSON.parse(raw);
	} catch {
		res.writeHead(400).end('{}');
		return;
	}
	const start = new Date(body.start);
	const end = new Date(body.end);
	const conn = await pool.getConnection();
	try {
		await conn.beginTransaction();
		await conn.query('SELECT id FROM boxes WHERE id = ? FOR UPDATE', [body.boxId]);
		// With the same lower bound on start_at as Boxwright's read (no booking and purge
		// lasts longer than 7.5 days), so neither side reads a box's whole history.
		const [overlap] = await conn.query(
			"SELECT id FROM bookings WHERE box_id = ? AND status IN ('pending','confirmed') AND start_at < ? AND blocked_until > ? AND start_at >= ? LIMIT 1",
			[body.boxId, end, start, new Date(start.getTime() - LONGEST_HOLD_MS)]
		);
		if (overlap.length) {
			await conn.rollback();
			res.writeHead(409).end('{}');
			return;
		}
		const [result] = await conn.query(
			"INSERT INTO bookings (box_id, user_id, start_at, end_at, blocked_until, purpose, status) VALUES (?, ?, ?, ?, ?, ?, 'confirmed')",
			[body.boxId, body.userId, start, end, end, body.purpose]
		);
		await conn.commit();
		res
			.writeHead(201, { 'content-type': 'application/json' })
			.end(JSON.stringify({ id: result.insertId }));
	} catch (e) {
		await conn.rollback().catch(() => {});
		res.writeHead(500).end(String(e));
	} finally {
		conn.release();
	}
});
server.listen(port, '127.0.0.1', () => console.log('baseline ready'));
process.on('SIGTERM', () => server.close(() => pool.end().then(() => process.exit(0))));
