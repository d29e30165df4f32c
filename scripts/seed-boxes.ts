// Demo boxes, training, certifications, a few weeks of bookings and atmosphere readings.
// Everything here is invented. Times are laid out relative to the moment of seeding, on
// the facility's wall clock, so the calendar looks lived-in whenever the demo starts.
import { and, eq, inArray, sql } from 'drizzle-orm';
import { DateTime } from 'luxon';
import type { Database } from '../src/lib/server/db/connect';
import {
	atmosphereReadings,
	bookings,
	boxes,
	boxPorts,
	boxRequiredModules,
	certifications,
	gloves,
	gloveStock,
	leakTests,
	maintenanceLog,
	maintenanceTasks,
	modulePrerequisites,
	moduleTrainers,
	trainingModules
} from '../src/lib/server/db/schema';

const tz = process.env.FACILITY_TZ ?? 'Europe/Berlin';

const modules = [
	{
		key: 'general',
		name: 'General glove box use',
		validityMonths: 12,
		requires: [],
		description:
			'Working through the gloves, the atmosphere display, what may and may not go in, what to do in an alarm.'
	},
	{
		key: 'antechamber',
		name: 'Antechamber transfers',
		validityMonths: 12,
		requires: ['general'],
		description:
			'Evacuate and refill cycles for the large and small antechambers; porous items; never a vessel sealed at 1 atm.'
	},
	{
		key: 'electrochem',
		name: 'Air-free electrochemistry',
		validityMonths: 12,
		requires: ['general'],
		description: 'Cell assembly and feed-throughs in the argon box that hosts the potentiostat.'
	},
	{
		key: 'glovechange',
		name: 'Glove change',
		validityMonths: 24,
		requires: ['general', 'antechamber'],
		description:
			'Sealing the port with its cover, fitting a new glove by hand and orientation, flushing it with box gas.'
	}
] as const;

type BoxSeed = {
	name: string;
	room: string;
	gas: 'Ar' | 'N2';
	volumeL: number;
	description: string;
	needsApproval: boolean;
	excludedClasses: string[];
	requires: (typeof modules)[number]['key'][];
	ports: { position: string; diameterMm: number }[];
	rateInternal: number;
	rateExternal: number;
	atmosphereState: 'ok' | 'watch';
};

const boxSeeds: BoxSeed[] = [
	{
		name: 'Kestrel',
		room: 'B2.14',
		gas: 'Ar',
		volumeL: 1150,
		description:
			'Four-port argon box for general air-sensitive synthesis; large and small antechambers.',
		needsApproval: false,
		excludedClasses: ['sulfur_compounds', 'mercury'],
		requires: ['general', 'antechamber'],
		ports: [
			{ position: 'front-left', diameterMm: 200 },
			{ position: 'front-right', diameterMm: 200 },
			{ position: 'second-left', diameterMm: 200 },
			{ position: 'second-right', diameterMm: 200 }
		],
		rateInternal: 6.5,
		rateExternal: 19.5,
		atmosphereState: 'ok'
	},
	{
		name: 'Heron',
		room: 'B2.14',
		gas: 'Ar',
		volumeL: 640,
		description:
			'Two-port argon box with the potentiostat feed-through; bookings need a manager’s approval.',
		needsApproval: true,
		excludedClasses: ['halogenated_solvents', 'sulfur_compounds', 'volatile_amines'],
		requires: ['general', 'antechamber', 'electrochem'],
		ports: [
			{ position: 'front-left', diameterMm: 200 },
			{ position: 'front-right', diameterMm: 200 }
		],
		rateInternal: 8,
		rateExternal: 24,
		atmosphereState: 'ok'
	},
	{
		name: 'Tern',
		room: 'C1.03',
		gas: 'N2',
		volumeL: 820,
		description: 'Two-port nitrogen box for weighing and storage; no halogenated solvents.',
		needsApproval: false,
		excludedClasses: ['halogenated_solvents'],
		requires: ['general'],
		ports: [
			{ position: 'front-left', diameterMm: 150 },
			{ position: 'front-right', diameterMm: 150 }
		],
		rateInternal: 4,
		rateExternal: 12,
		atmosphereState: 'watch'
	}
];

/** Who holds what: months ago granted (negative = expired long since). */
const grants: Record<string, { module: (typeof modules)[number]['key']; monthsAgo: number }[]> = {
	'manager@example.org': [
		{ module: 'general', monthsAgo: 3 },
		{ module: 'antechamber', monthsAgo: 3 },
		{ module: 'electrochem', monthsAgo: 3 },
		{ module: 'glovechange', monthsAgo: 3 }
	],
	'trainer@example.org': [
		{ module: 'general', monthsAgo: 5 },
		{ module: 'antechamber', monthsAgo: 5 },
		{ module: 'electrochem', monthsAgo: 5 },
		{ module: 'glovechange', monthsAgo: 8 }
	],
	'member@example.org': [
		{ module: 'general', monthsAgo: 4 },
		{ module: 'antechamber', monthsAgo: 4 },
		// The expired one: electrochemistry lapsed last month, so Heron is not bookable.
		{ module: 'electrochem', monthsAgo: 13 }
	],
	'pi@example.org': [
		{ module: 'general', monthsAgo: 11 },
		{ module: 'antechamber', monthsAgo: 11 }
	],
	'k.osei@example.org': [
		{ module: 'general', monthsAgo: 2 },
		{ module: 'antechamber', monthsAgo: 2 },
		{ module: 'electrochem', monthsAgo: 2 }
	],
	'a.brandt@example.org': [{ module: 'general', monthsAgo: 6 }]
};

const purposes = [
	'Ligand synthesis, Schlenk-free workup',
	'Weighing catalyst precursors',
	'Coin-cell assembly',
	'Recrystallisation set-up',
	'Sample prep for NMR (J. Young tubes)',
	'Electrolyte preparation',
	'Storage check and inventory',
	'Grignard reagent titration'
];

/** A small deterministic generator, so every seeded demo looks the same. */
function generator(seed: number) {
	let x = seed;
	return () => {
		x = (x * 1103515245 + 12345) % 2147483648;
		return x / 2147483648;
	};
}

export async function seedBoxesAndBookings(
	db: Database,
	userIds: Map<string, number>
): Promise<string> {
	const moduleIds = new Map<string, number>();
	for (const m of modules) {
		const values = { name: m.name, description: m.description, validityMonths: m.validityMonths };
		await db.insert(trainingModules).values(values).onDuplicateKeyUpdate({ set: values });
		const [row] = await db
			.select({ id: trainingModules.id })
			.from(trainingModules)
			.where(eq(trainingModules.name, m.name));
		moduleIds.set(m.key, row.id);
	}
	for (const m of modules) {
		for (const r of m.requires) {
			await db
				.insert(modulePrerequisites)
				.ignore()
				.values({ moduleId: moduleIds.get(m.key)!, requiresModuleId: moduleIds.get(r)! });
		}
	}
	const trainer = userIds.get('trainer@example.org')!;
	for (const key of ['general', 'antechamber', 'electrochem'] as const) {
		await db
			.insert(moduleTrainers)
			.ignore()
			.values({ moduleId: moduleIds.get(key)!, userId: trainer });
	}

	const boxIds: number[] = [];
	for (const b of boxSeeds) {
		const values = {
			name: b.name,
			room: b.room,
			gas: b.gas,
			volumeL: b.volumeL,
			description: b.description,
			needsApproval: b.needsApproval,
			excludedClasses: b.excludedClasses,
			rateInternal: b.rateInternal,
			rateExternal: b.rateExternal,
			atmosphereState: b.atmosphereState
		};
		await db.insert(boxes).values(values).onDuplicateKeyUpdate({ set: values });
		const [row] = await db.select({ id: boxes.id }).from(boxes).where(eq(boxes.name, b.name));
		boxIds.push(row.id);
		await db.delete(boxPorts).where(eq(boxPorts.boxId, row.id));
		await db
			.insert(boxPorts)
			.values(b.ports.map((p, i) => ({ boxId: row.id, ...p, sortOrder: i })));
		await db.delete(boxRequiredModules).where(eq(boxRequiredModules.boxId, row.id));
		await db
			.insert(boxRequiredModules)
			.values(b.requires.map((k) => ({ boxId: row.id, moduleId: moduleIds.get(k)! })));
	}

	// History below is laid down once; a second run leaves it as it is.
	const [{ n }] = await db
		.select({ n: sql<number>`count(*)` })
		.from(bookings)
		.where(inArray(bookings.boxId, boxIds));
	if (Number(n) > 0) return `${boxSeeds.length} boxes, ${modules.length} modules (history kept)`;

	const now = DateTime.now().setZone(tz);
	const today = now.startOf('day');
	let certCount = 0;
	for (const [email, list] of Object.entries(grants)) {
		const userId = userIds.get(email)!;
		for (const g of list) {
			const module = modules.find((m) => m.key === g.module)!;
			const granted = today.minus({ months: g.monthsAgo });
			const existing = await db
				.select({ id: certifications.id })
				.from(certifications)
				.where(
					and(
						eq(certifications.userId, userId),
						eq(certifications.moduleId, moduleIds.get(g.module)!)
					)
				);
			if (existing.length) continue;
			await db.insert(certifications).values({
				userId,
				moduleId: moduleIds.get(g.module)!,
				grantedAt: granted.toJSDate(),
				expiresAt: granted.plus({ months: module.validityMonths }).toJSDate(),
				grantedBy: userIds.get('trainer@example.org')!,
				note: 'Demo record'
			});
			certCount++;
		}
	}

	// Bookings: two weeks back to two weeks ahead, daytime only, on the 15-minute grid.
	const bookers: Record<string, string[]> = {
		Kestrel: ['member@example.org', 'k.osei@example.org', 'pi@example.org', 'trainer@example.org'],
		Heron: ['k.osei@example.org', 'trainer@example.org'],
		Tern: ['member@example.org', 'a.brandt@example.org', 'pi@example.org', 'k.osei@example.org']
	};
	const random = generator(2026);
	const rows: (typeof bookings.$inferInsert)[] = [];
	for (let day = -14; day <= 14; day++) {
		const date = today.plus({ days: day });
		if (date.weekday === 7) continue; // quiet Sundays
		boxSeeds.forEach((box, i) => {
			const slots = [9, 13, 16].filter(() => random() < 0.55);
			for (const hour of slots) {
				const who = bookers[box.name][Math.floor(random() * bookers[box.name].length)];
				// The member books lightly: no more than one slot every other day.
				if (who === 'member@example.org' && (day + i) % 2 !== 0) continue;
				const start = date.set({ hour, minute: random() < 0.5 ? 0 : 30 });
				const end = start.plus({ minutes: [60, 90, 120, 150][Math.floor(random() * 4)] });
				const volatileSolvents = box.name !== 'Heron' && random() < 0.2;
				const past = end < now;
				const pending = box.needsApproval && !past && random() < 0.4;
				rows.push({
					boxId: boxIds[i],
					userId: userIds.get(who)!,
					startAt: start.toJSDate(),
					endAt: end.toJSDate(),
					blockedUntil: volatileSolvents ? end.plus({ minutes: 30 }).toJSDate() : end.toJSDate(),
					purpose: purposes[Math.floor(random() * purposes.length)],
					volatileSolvents,
					chemicalClasses: [],
					status: past ? 'completed' : pending ? 'pending' : 'confirmed',
					checkInAt: past ? start.plus({ minutes: 4 }).toJSDate() : null,
					checkOutAt: past ? end.minus({ minutes: 6 }).toJSDate() : null
				});
			}
		});
	}
	// Drop anything that would collide with its purge buffer or a booking before it.
	const kept: typeof rows = [];
	for (const r of rows) {
		const clash = kept.some(
			(k) => k.boxId === r.boxId && k.startAt < r.blockedUntil && r.startAt < k.blockedUntil
		);
		if (!clash) kept.push(r);
	}
	await db.insert(bookings).values(kept);

	// A butyl glove on every port; Kestrel's front-right one is near the end of its life.
	const ports = await db.select().from(boxPorts).where(inArray(boxPorts.boxId, boxIds));
	await db.insert(gloves).values(
		ports.map((p, i) => {
			const worn = p.position === 'front-right' && p.boxId === boxIds[0];
			return {
				portId: p.id,
				material: 'butyl' as const,
				thicknessMm: 0.4,
				size: '8',
				hand: p.position.endsWith('left') ? ('left' as const) : ('right' as const),
				installedAt: now.minus({ months: worn ? 13 : 2 + (i % 4), days: i }).toJSDate()
			};
		})
	);

	// Spare gloves on the shelf; the right-hand size 8 butyl is down to its minimum.
	await db.insert(gloveStock).values([
		{ material: 'butyl', size: '8', thicknessMm: 0.4, hand: 'left', quantity: 4, minQuantity: 2 },
		{ material: 'butyl', size: '8', thicknessMm: 0.4, hand: 'right', quantity: 2, minQuantity: 2 },
		{
			material: 'butyl',
			size: '9',
			thicknessMm: 0.4,
			hand: 'ambidextrous',
			quantity: 3,
			minQuantity: 1
		},
		{
			material: 'neoprene',
			size: '8.5',
			thicknessMm: 0.5,
			hand: 'left',
			quantity: 1,
			minQuantity: 1
		}
	]);

	// Readings every 3 hours for two weeks; Tern drifts above its warn level today.
	const readings: (typeof atmosphereReadings.$inferInsert)[] = [];
	boxSeeds.forEach((box, i) => {
		for (let h = 14 * 24; h >= 0; h -= 3) {
			const at = now.minus({ hours: h }).startOf('hour');
			const drift = box.atmosphereState === 'watch' && h < 12 ? 0.9 : 0;
			readings.push({
				boxId: boxIds[i],
				at: at.toJSDate(),
				o2Ppm: Math.round((0.25 + random() * 0.45 + drift) * 100) / 100,
				h2oPpm: Math.round((0.15 + random() * 0.4 + drift * 0.5) * 100) / 100,
				source: 'manual'
			});
		}
	});
	await db.insert(atmosphereReadings).values(readings);

	// Demo bookings that are not waiting for approval were confirmed when made.
	await db.execute(
		sql`UPDATE bookings SET confirmed_at = created_at WHERE confirmed_at IS NULL AND status <> 'pending'`
	);
	// Each booking is billed to its booker's group.
	await db.execute(
		sql`UPDATE bookings b JOIN (SELECT user_id, MIN(group_id) AS group_id FROM group_memberships WHERE status = 'active' GROUP BY user_id) m ON m.user_id = b.user_id SET b.group_id = m.group_id WHERE b.group_id IS NULL`
	);

	// Upkeep: each box has its routine; one purifier is overdue, one glove check due soon.
	const manager = userIds.get('manager@example.org') ?? null;
	const routine = [
		{
			kind: 'purifier_regeneration',
			title: 'Regenerate the purifier',
			intervalDays: 60,
			outageMinutes: 480
		},
		{
			kind: 'sensor_calibration',
			title: 'Calibrate the O₂ and H₂O sensors',
			intervalDays: 180,
			outageMinutes: 60
		},
		{ kind: 'pump_oil', title: 'Change the vacuum pump oil', intervalDays: 180, outageMinutes: 60 },
		{
			kind: 'antechamber_seals',
			title: 'Inspect the antechamber seals and doors',
			intervalDays: 90,
			outageMinutes: 0
		},
		{ kind: 'glove_inspection', title: 'Formal glove check', intervalDays: 7, outageMinutes: 0 }
	] as const;
	let taskCount = 0;
	for (const [i, boxId] of boxIds.entries()) {
		for (const [j, task] of routine.entries()) {
			// Days since it was last done: Kestrel's purifier is overdue, Heron's gloves due in two days.
			const ago =
				i === 0 && j === 0
					? 66
					: i === 1 && j === 4
						? 5
						: Math.floor(task.intervalDays * (0.2 + 0.1 * ((i + j) % 5)));
			const lastDone = now.minus({ days: ago }).set({ hour: 10, minute: 0 });
			const [{ id }] = await db
				.insert(maintenanceTasks)
				.values({
					boxId,
					...task,
					lastDoneAt: lastDone.toJSDate(),
					nextDueAt: lastDone.plus({ days: task.intervalDays }).toJSDate(),
					// The demo's overdue task was already announced; seeding sends no mail.
					notifiedDueAt: lastDone.plus({ days: task.intervalDays }).toJSDate()
				})
				.$returningId();
			await db
				.insert(maintenanceLog)
				.values({ taskId: id, doneAt: lastDone.toJSDate(), doneBy: manager });
			taskCount++;
		}
		// A leak test last month by the pressure-change method; Tern's is borderline.
		const rate = i === 2 ? 2.1e-3 : 3.2e-4 + i * 1e-4;
		await db.insert(leakTests).values({
			boxId,
			method: 'pressure',
			inputs: { p1Pa: 100_325, p2Pa: 100_325 + rate * 100_325, t1K: 293.15, t2K: 293.15, hours: 1 },
			hourlyLeakRate: rate,
			isoClass: rate <= 5e-4 ? 1 : rate < 2.5e-3 ? 2 : 3,
			requiredClass: 3,
			passed: true,
			testedAt: now
				.minus({ days: 20 + i })
				.set({ hour: 9, minute: 0 })
				.toJSDate(),
			testedBy: manager
		});
	}

	return `${boxSeeds.length} boxes, ${modules.length} modules, ${certCount} certifications, ${kept.length} bookings, ${readings.length} readings, ${taskCount} maintenance tasks`;
}
