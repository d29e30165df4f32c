// The dashboard benchmark's baseline: a bare node:http endpoint reading, with mysql2, the rows
// Boxwright's dashboard reads, in the same statements (the session check; the shell's counts
// and check-in candidates; the person; their bookings ahead; every box with its reading,
// outage, modules and ports; every module with their standing; for a manager upkeep due,
// training needs and open requests), side by side as the app sends them, answered as JSON.
// No framework, no rendering: what is left of a dashboard when only its reads remain.
import { createHash } from 'node:crypto';
import { createServer } from 'node:http';
import mysql from 'mysql2/promise';

const pool = mysql.createPool({
	uri: process.env.DATABASE_URL,
	connectionLimit: Number(process.env.DB_POOL_SIZE ?? 20),
	timezone: 'Z'
});
const port = Number(process.env.PORT);
const DAY = 86_400_000;
const teaching = "('trainer', 'manager', 'admin')";

const session = (id) =>
	pool.query(
		`SELECT s.id, s.user_id, s.expires_at, u.email, u.name, u.role, u.status
		FROM sessions s JOIN users u ON u.id = s.user_id WHERE s.id = ?`,
		[id]
	);

function shell(user, manager, now) {
	const soon = new Date(now.getTime() + 15 * 60_000);
	const closes = new Date(now.getTime() - 12 * 3_600_000);
	return pool.query(
		`SELECT EXISTS (SELECT id, name FROM research_groups WHERE pi_user_id = ?) AS is_pi,
			(SELECT COUNT(*) FROM notifications WHERE user_id = ? AND read_at IS NULL) AS unread,
			(SELECT COUNT(*) FROM users u JOIN group_memberships gm ON gm.user_id = u.id
				JOIN research_groups rg ON rg.id = gm.group_id
				WHERE u.status = 'pending' AND gm.status = 'pending' ${manager ? '' : 'AND rg.pi_user_id = ?'}) AS approvals,
			${manager ? "(SELECT COUNT(*) FROM bookings WHERE status = 'pending')" : '0'} AS pending_bookings,
			c.*
		FROM users LEFT JOIN (SELECT b.id, x.name, b.status, b.start_at, b.end_at, b.check_in_at,
				b.check_out_at FROM bookings b JOIN boxes x ON x.id = b.box_id
			WHERE b.user_id = ? AND b.start_at <= ? AND ((b.status = 'confirmed'
				AND b.check_in_at IS NULL AND b.end_at > ?) OR (b.check_in_at IS NOT NULL
				AND b.check_out_at IS NULL AND b.end_at >= ?))
			ORDER BY b.start_at LIMIT 5) c ON TRUE
		WHERE users.id = ? ORDER BY c.start_at, c.id`,
		[user, user, ...(manager ? [] : [user]), user, soon, now, closes, user]
	);
}

const me = (user, manager) =>
	pool.query(
		`SELECT rg.name, rg.pi_user_id,
			(SELECT JSON_ARRAYAGG(JSON_OBJECT('id', l.id, 'name', l.name, 'external', l.external)
				ORDER BY l.name) FROM research_groups l WHERE l.pi_user_id = ?) AS led,
			${manager ? "(SELECT COUNT(*) FROM outbox WHERE status = 'failed')" : '0'} AS failed
		FROM users LEFT JOIN research_groups rg ON rg.id = (SELECT gm.group_id
			FROM group_memberships gm WHERE gm.user_id = ? AND gm.status = 'active'
			ORDER BY gm.id LIMIT 1)
		WHERE users.id = ?`,
		[user, user, user]
	);

const upcoming = (user, now) =>
	pool.query(
		`SELECT b.id, b.box_id, x.name, x.gas, b.start_at, b.end_at, b.purpose, b.status,
			b.cancel_reason, b.cancel_cause, b.volatile_solvents, b.check_in_at, b.check_out_at,
			x.cancel_window_hours
		FROM bookings b JOIN boxes x ON x.id = b.box_id
		WHERE b.user_id = ? AND b.end_at > ? AND b.status <> 'cancelled'
		ORDER BY b.start_at, b.id`,
		[user, now]
	);

const boxes = (now) =>
	pool.query(
		`SELECT boxes.id, boxes.name, boxes.room, boxes.gas, boxes.volume_l, boxes.status,
			boxes.atmosphere_state, r.at, r.o2_ppm, r.h2o_ppm, o.id AS outage_id, o.end_at,
			o.reason, o.kind,
			(SELECT JSON_ARRAYAGG(JSON_OBJECT('id', tm.id, 'name', tm.name) ORDER BY tm.name)
				FROM box_required_modules brm JOIN training_modules tm ON tm.id = brm.module_id
				WHERE brm.box_id = boxes.id) AS required,
			(SELECT JSON_ARRAYAGG(JSON_OBJECT('id', p.id, 'position', p.position,
				'diameterMm', p.diameter_mm, 'installedAt', g.installed_at,
				'change', (SELECT gc.status FROM glove_changes gc WHERE gc.port_id = p.id
					ORDER BY gc.id DESC LIMIT 1),
				'damage', (SELECT JSON_ARRAYAGG(gi.action) FROM glove_inspections gi
					WHERE gi.glove_id = g.id AND gi.damaged = 1)) ORDER BY p.sort_order, p.id)
				FROM box_ports p LEFT JOIN gloves g ON g.id = (SELECT g2.id FROM gloves g2
					WHERE g2.port_id = p.id AND g2.removed_at IS NULL ORDER BY g2.id LIMIT 1)
				WHERE p.box_id = boxes.id) AS ports
		FROM boxes
		LEFT JOIN atmosphere_readings r ON r.id = (SELECT ar.id FROM atmosphere_readings ar
			WHERE ar.box_id = boxes.id ORDER BY ar.at DESC LIMIT 1)
		LEFT JOIN outages o ON o.id = (SELECT ou.id FROM outages ou WHERE ou.box_id = boxes.id
			AND ou.start_at <= ? AND ou.end_at > ? ORDER BY ou.end_at DESC, ou.id LIMIT 1)
		ORDER BY boxes.name`,
		[now, now]
	);

const modules = (user) =>
	pool.query(
		`SELECT training_modules.id, training_modules.name, c.id AS cert, c.granted_at,
			c.expires_at, c.revoked_at,
			(SELECT JSON_ARRAYAGG(u.name ORDER BY u.name) FROM module_trainers mt
				JOIN users u ON u.id = mt.user_id WHERE mt.module_id = training_modules.id
				AND u.status = 'active' AND u.role IN ${teaching}) AS trainers,
			(SELECT JSON_ARRAYAGG(mp.requires_module_id) FROM module_prerequisites mp
				WHERE mp.module_id = training_modules.id) AS prerequisites,
			(SELECT MIN(tr.created_at) FROM training_requests tr WHERE tr.user_id = ?
				AND tr.module_id = training_modules.id AND tr.status = 'open') AS requested_at
		FROM training_modules LEFT JOIN certifications c
			ON c.module_id = training_modules.id AND c.user_id = ?
		ORDER BY training_modules.name, c.granted_at DESC, c.id DESC`,
		[user, user]
	);

const dueTasks = (now) =>
	pool.query(
		`SELECT t.id, t.box_id, x.name, t.kind, t.title, t.interval_days, t.outage_minutes,
			t.last_done_at, t.next_due_at, t.planned_outage_id, o.start_at, o.end_at
		FROM maintenance_tasks t JOIN boxes x ON x.id = t.box_id
			LEFT JOIN outages o ON o.id = t.planned_outage_id
		WHERE t.active = 1 AND t.next_due_at <= ? ORDER BY t.next_due_at`,
		[new Date(now.getTime() + 7 * DAY)]
	);

const needs = (user) =>
	pool.query(
		`(SELECT 'renewal' AS kind, u.id AS user_id, u.name, NULL AS email, c.module_id,
			tm.name AS module_name, c.granted_at, c.expires_at, c.revoked_at
		FROM certifications c JOIN users u ON u.id = c.user_id
			JOIN training_modules tm ON tm.id = c.module_id
		WHERE c.module_id IN (SELECT mt.module_id FROM module_trainers mt WHERE mt.user_id = ?)
			AND u.status = 'active')
		UNION ALL
		(SELECT 'untrained', u.id, u.name, u.email, NULL, NULL, NULL, NULL, NULL FROM users u
		WHERE u.status = 'active' AND u.role = 'member'
			AND NOT EXISTS (SELECT 1 FROM certifications c WHERE c.user_id = u.id)
		ORDER BY u.name LIMIT 50)`,
		[user]
	);

const requests = (user, manager) =>
	pool.query(
		`SELECT tr.id, tr.user_id, u.name, tr.module_id, tm.name AS module_name, tr.note,
			tr.created_at
		FROM training_requests tr JOIN users u ON u.id = tr.user_id
			JOIN training_modules tm ON tm.id = tr.module_id
		WHERE tr.status = 'open' AND u.status = 'active' AND tr.user_id <> ?
			${manager ? '' : 'AND tr.module_id IN (SELECT module_id FROM module_trainers WHERE user_id = ?)'}
		ORDER BY tr.created_at, tr.id`,
		manager ? [user] : [user, user]
	);

const rank = { member: 0, trainer: 1, manager: 2, admin: 3 };

const server = createServer(async (req, res) => {
	try {
		const token = /(?:^|;\s*)bw_session=([^;]+)/.exec(req.headers.cookie ?? '')?.[1];
		if (!token) return void res.writeHead(401).end('{}');
		const [[found]] = await session(createHash('sha256').update(token).digest('hex'));
		if (!found || found.status !== 'active' || found.expires_at <= new Date())
			return void res.writeHead(401).end('{}');
		const now = new Date();
		const id = found.user_id;
		const manager = rank[found.role] >= rank.manager;
		const trainer = rank[found.role] >= rank.trainer;
		const reads = [
			shell(id, manager, now),
			me(id, manager),
			upcoming(id, now),
			boxes(now),
			modules(id),
			...(manager ? [dueTasks(now)] : []),
			...(trainer ? [needs(id), requests(id, manager)] : [])
		];
		const rows = (await Promise.all(reads)).map(([r]) => r);
		const statements = 1 + reads.length;
		res
			.writeHead(200, { 'content-type': 'application/json', 'x-statements': String(statements) })
			.end(JSON.stringify({ user: { id, name: found.name, role: found.role }, rows }));
	} catch (e) {
		res.writeHead(500).end(String(e));
	}
});
server.listen(port, '127.0.0.1', () => console.log('baseline ready'));
process.on('SIGTERM', () => server.close(() => pool.end().then(() => process.exit(0))));
