import { hasRole, type Role } from '$lib/domain/roles';

export type NavItem = { href: string; label: string };

/** What the shell links to, by role; the server guards each page regardless. */
export function navFor(role: Role, isPi: boolean): NavItem[] {
	const items: NavItem[] = [
		{ href: '/', label: 'Dashboard' },
		{ href: '/calendar', label: 'Calendar' },
		{ href: '/bookings', label: 'My bookings' },
		{ href: '/boxes', label: 'Boxes' },
		{ href: '/training', label: 'Training' },
		{ href: '/calc', label: 'Calculations' }
	];
	if (hasRole(role, 'trainer')) items.push({ href: '/manage/training', label: 'Certifications' });
	if (isPi || hasRole(role, 'manager'))
		items.push({ href: '/manage/approvals', label: 'Approvals' });
	if (isPi || hasRole(role, 'manager')) items.push({ href: '/groups', label: 'Groups' });
	if (hasRole(role, 'manager')) items.push({ href: '/manage/statements', label: 'Statements' });
	if (hasRole(role, 'manager')) items.push({ href: '/manage/gloves', label: 'Spare gloves' });
	if (hasRole(role, 'manager')) items.push({ href: '/manage/labels', label: 'Box labels' });
	if (hasRole(role, 'manager')) items.push({ href: '/manage/outbox', label: 'Outbox' });
	if (hasRole(role, 'manager')) items.push({ href: '/reports', label: 'Reports' });
	if (role === 'admin') items.push({ href: '/admin/users', label: 'Users and roles' });
	if (hasRole(role, 'manager')) items.push({ href: '/admin/audit', label: 'Audit log' });
	items.push({ href: '/notifications', label: 'Notifications' });
	items.push({ href: '/account', label: 'Account' });
	return items;
}
