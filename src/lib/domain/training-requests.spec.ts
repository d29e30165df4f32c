import { describe, expect, it } from 'vitest';
import {
	bookingPath,
	closesCircle,
	isLive,
	reminderStage,
	requestRefusal
} from './training-requests';

const now = new Date('2026-03-10T09:00:00Z');
const ahead = (days: number, ms = 0) => new Date(now.getTime() + days * 86_400_000 + ms);

describe('expiry reminders', () => {
	it('none more than 30 days ahead', () => {
		expect(reminderStage(ahead(30, 1), now)).toBeNull();
		expect(reminderStage(ahead(90), now)).toBeNull();
	});
	it('the 30-day reminder from 30 days ahead down to just over a week', () => {
		expect(reminderStage(ahead(30), now)).toBe(30);
		expect(reminderStage(ahead(8), now)).toBe(30);
		expect(reminderStage(ahead(7, 1), now)).toBe(30);
	});
	it('the 7-day reminder inside the last week, so a late first look sends only that one', () => {
		expect(reminderStage(ahead(7), now)).toBe(7);
		expect(reminderStage(ahead(5), now)).toBe(7);
		expect(reminderStage(ahead(0, 1), now)).toBe(7);
	});
	it('none once it has expired', () => {
		expect(reminderStage(now, now)).toBeNull();
		expect(reminderStage(ahead(-1), now)).toBeNull();
	});
});

describe('asking for training', () => {
	it('refuses a second open request and a module held well before its expiry', () => {
		expect(requestRefusal('none', true)).toBe('open');
		expect(requestRefusal('current', true)).toBe('open');
		expect(requestRefusal('current', false)).toBe('held');
	});
	it('allows a renewal inside the warning window, and after a lapse or revocation', () => {
		for (const state of ['expiring', 'expired', 'revoked', 'none'] as const)
			expect(requestRefusal(state, false)).toBeNull();
	});
	it('current and expiring certifications count for booking', () => {
		expect(
			['current', 'expiring', 'expired', 'revoked', 'none'].map((s) => isLive(s as never))
		).toEqual([true, true, false, false, false]);
	});
});

describe('the path to a first booking', () => {
	const general = { id: 1, name: 'General use' };
	const transfer = { id: 2, name: 'Antechamber' };
	const boxes = [
		{ id: 10, name: 'Argon A', requiredModules: [general, transfer] },
		{ id: 11, name: 'Nitrogen B', requiredModules: [general] }
	];
	it('a newcomer sees every module each box still needs', () => {
		const path = bookingPath(boxes, new Set());
		expect(path.canBookAny).toBe(false);
		expect(path.boxes.map((b) => b.missing.map((m) => m.id))).toEqual([[1, 2], [1]]);
	});
	it('one box open is enough to book', () => {
		const path = bookingPath(boxes, new Set([1]));
		expect(path.canBookAny).toBe(true);
		expect(path.boxes[0].missing).toEqual([transfer]);
	});
	it('a box that requires nothing opens at once; no boxes, nothing to ask for', () => {
		expect(bookingPath([{ id: 12, name: 'Open', requiredModules: [] }], new Set()).canBookAny).toBe(
			true
		);
		expect(bookingPath([], new Set()).canBookAny).toBe(true);
	});
});

describe('prerequisites without circles', () => {
	const edges = [
		{ moduleId: 2, requiresModuleId: 1 },
		{ moduleId: 3, requiresModuleId: 2 }
	];
	it('a module cannot require itself', () => {
		expect(closesCircle(1, [1], [])).toBe(true);
	});
	it('nor a module that requires it, directly or further down', () => {
		expect(closesCircle(1, [2], edges)).toBe(true);
		expect(closesCircle(1, [3], edges)).toBe(true);
	});
	it('a chain in one direction is fine, and the module’s own old edges do not count', () => {
		expect(closesCircle(3, [1, 2], edges)).toBe(false);
		expect(closesCircle(2, [1], [...edges, { moduleId: 2, requiresModuleId: 3 }])).toBe(false);
	});
});
