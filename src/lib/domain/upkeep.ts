// Upkeep of a box: leak tests and recurring maintenance.
import { DateTime } from 'luxon';
import type { OutageKind } from './bookings';
import { fromLocal } from './time';

export const leakMethods = ['oxygen', 'pressure'] as const;
export type LeakMethod = (typeof leakMethods)[number];
export const leakMethodLabel: Record<LeakMethod, string> = {
	oxygen: 'Oxygen method (O₂ rise)',
	pressure: 'Pressure-change method'
};

export const maintenanceKinds = [
	'purifier_regeneration',
	'sensor_calibration',
	'pump_oil',
	'antechamber_seals',
	'glove_inspection',
	'other'
] as const;
export type MaintenanceKind = (typeof maintenanceKinds)[number];

export const maintenanceKindLabel: Record<MaintenanceKind, string> = {
	purifier_regeneration: 'Purifier regeneration',
	sensor_calibration: 'O₂ and H₂O sensor calibration',
	pump_oil: 'Vacuum pump oil',
	antechamber_seals: 'Antechamber seals and doors',
	glove_inspection: 'Glove inspection',
	other: 'Other'
};

/**
 * Starting intervals for a new task, in days. Common practice, not a standard: purifiers
 * are regenerated every few weeks to months (when the box no longer holds 1 ppm), gloves get
 * a formal check weekly to monthly (REFERENCES.md, "Rules of the trade"); sensor calibration
 * and pump oil every six months and seals every quarter are from memory. The box maker's
 * manual and the facility's procedures set the real ones.
 */
export const defaultIntervalDays: Record<MaintenanceKind, number> = {
	purifier_regeneration: 60,
	sensor_calibration: 180,
	pump_oil: 180,
	antechamber_seals: 90,
	glove_inspection: 7,
	other: 30
};

/** The outage kind a planned outage for this task is filed under. */
export const outageKindFor: Record<MaintenanceKind, OutageKind> = {
	purifier_regeneration: 'regeneration',
	sensor_calibration: 'sensor',
	pump_oil: 'other',
	antechamber_seals: 'other',
	glove_inspection: 'other',
	other: 'other'
};

/** A task is "due soon" this many days ahead of its date. */
export const DUE_SOON_DAYS = 7;

/** The next due date: the interval in calendar days on the facility's clock. */
export function nextDueAt(doneAt: Date, intervalDays: number, tz: string): Date {
	return DateTime.fromJSDate(doneAt).setZone(tz).plus({ days: intervalDays }).toJSDate();
}

export type DueState = 'overdue' | 'due' | 'due_soon' | 'ok';

/**
 * overdue: past its date by more than a day; due: within a day either side of it;
 * due_soon: within DUE_SOON_DAYS ahead; ok: later.
 */
export function dueState(next: Date, now: Date): DueState {
	const days = (next.getTime() - now.getTime()) / 86_400_000;
	if (days < -1) return 'overdue';
	if (days <= 1) return 'due';
	if (days <= DUE_SOON_DAYS) return 'due_soon';
	return 'ok';
}

export const dueStateLabel: Record<DueState, string> = {
	overdue: 'Overdue',
	due: 'Due',
	due_soon: 'Due soon',
	ok: 'Scheduled'
};

/**
 * When a task entered as done on a date (YYYY-MM-DD, facility clock) counts as done: midday
 * that day, or now when that is today and midday has not come yet. Null for a date that
 * does not exist.
 */
export function doneOn(date: string, tz: string, now = new Date()): Date | null {
	const noon = fromLocal(date, '12:00', tz);
	if (!noon) return null;
	return noon > now && noon.getTime() - now.getTime() < 12 * 3_600_000 ? now : noon;
}
