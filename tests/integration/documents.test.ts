// Standard operating procedures (PDF) on boxes and training modules, and who may see a damage
// photo. Each test makes its own box, module and people.
import { randomBytes } from 'node:crypto';
import { afterAll, describe, expect, it } from 'vitest';
import { count, eq } from 'drizzle-orm';
import {
	auditLog,
	documents,
	gloveInspections,
	moduleTrainers
} from '../../src/lib/server/db/schema';
import { closeTestDb, fitGloves, makeBox, makeModule, makeUser, testDb } from '../support/db';
import { Client, errorOf, signedIn } from '../support/http';
import { minimalPdf, png } from '../support/files';

afterAll(closeTestDb);

const unique = (label: string) => `${label} ${randomBytes(4).toString('hex')}`;

function upload(
	client: Client,
	fields: { title?: string; boxId?: number; moduleId?: number },
	file?: { bytes: Uint8Array<ArrayBuffer>; name: string; type: string }
) {
	const body = new FormData();
	if (fields.title !== undefined) body.set('title', fields.title);
	if (fields.boxId !== undefined) body.set('boxId', String(fields.boxId));
	if (fields.moduleId !== undefined) body.set('moduleId', String(fields.moduleId));
	if (file) body.set('file', new Blob([file.bytes], { type: file.type }), file.name);
	return client.request('POST', '/api/documents', body);
}

const asPdf = (bytes: Uint8Array<ArrayBuffer>, name = 'sop.pdf') => ({
	bytes,
	name,
	type: 'application/pdf'
});

async function rowsFor(where: { boxId: number } | { moduleId: number }) {
	const [row] = await testDb()
		.select({ n: count() })
		.from(documents)
		.where(
			'boxId' in where ? eq(documents.boxId, where.boxId) : eq(documents.moduleId, where.moduleId)
		);
	return row.n;
}

describe('SOP documents', () => {
	it('a manager attaches a PDF to a box; a member sees it listed and opens the same bytes', async () => {
		const boxId = await makeBox();
		const manager = await signedIn(await makeUser('manager'));
		const pdf = minimalPdf();
		const older = unique('Antechamber transfer SOP');
		const title = unique('Glove box general use SOP');

		const first = await upload(manager, { title: older, boxId }, asPdf(pdf));
		expect(first.status).toBe(201);
		const r = await upload(manager, { title, boxId }, asPdf(pdf));
		expect(r.status).toBe(201);
		const { document } = await r.json();
		expect(document).toEqual({
			id: expect.any(Number),
			title,
			sizeBytes: pdf.byteLength,
			url: `/documents/${document.id}`
		});
		const [row] = await testDb().select().from(documents).where(eq(documents.id, document.id));
		expect(row).toMatchObject({ boxId, moduleId: null, title, sizeBytes: pdf.byteLength });
		expect(row.storageKey).toMatch(/^documents\/[0-9a-f]{32}\.pdf$/);
		const audited = await testDb()
			.select()
			.from(auditLog)
			.where(eq(auditLog.entityId, String(document.id)));
		expect(audited.some((a) => a.action === 'document.added' && a.entity === 'document')).toBe(
			true
		);

		const member = await signedIn(await makeUser('member'));
		// Listed on the box page, newest first, with a link to open it.
		const page = await (await member.get(`/boxes/${boxId}`)).text();
		expect(page).toContain(`href="/documents/${document.id}"`);
		expect(page.indexOf(title)).toBeGreaterThan(-1);
		expect(page.indexOf(title)).toBeLessThan(page.indexOf(older));

		const opened = await member.get(`/documents/${document.id}`);
		expect(opened.status).toBe(200);
		expect(opened.headers.get('content-type')).toBe('application/pdf');
		expect(opened.headers.get('content-disposition')).toBe(`inline; filename="${title}.pdf"`);
		expect(opened.headers.get('x-content-type-options')).toBe('nosniff');
		expect(opened.headers.get('cache-control')).toContain('private');
		expect(Buffer.from(await opened.arrayBuffer()).equals(Buffer.from(pdf))).toBe(true);
	});

	it('a trainer attaches a PDF to a training module; a member finds it on the training page', async () => {
		const moduleId = await makeModule('sop');
		const teacher = await makeUser('trainer');
		await testDb().insert(moduleTrainers).values({ moduleId, userId: teacher.id });
		const trainer = await signedIn(teacher);
		const pdf = minimalPdf();
		const title = unique('Antechamber cycles procedure');
		// A trainer who does not teach the module may not change its documents.
		const stranger = await signedIn(await makeUser('trainer'));
		expect((await upload(stranger, { title, moduleId }, asPdf(pdf))).status).toBe(403);
		const r = await upload(trainer, { title, moduleId }, asPdf(pdf, 'antechamber.pdf'));
		expect(r.status).toBe(201);
		const { document } = await r.json();
		expect(await rowsFor({ moduleId })).toBe(1);

		const member = await signedIn(await makeUser('member'));
		const page = await (await member.get('/training')).text();
		expect(page).toContain(title);
		expect(page).toContain(`href="/documents/${document.id}"`);
		const opened = await member.get(`/documents/${document.id}`);
		expect(opened.status).toBe(200);
		expect(opened.headers.get('content-type')).toBe('application/pdf');
		expect(Buffer.from(await opened.arrayBuffer()).equals(Buffer.from(pdf))).toBe(true);

		// A trainer may manage a module's documents, not a box's.
		const boxId = await makeBox();
		const onBox = await upload(trainer, { title: unique('Box SOP'), boxId }, asPdf(pdf));
		expect(onBox.status).toBe(403);
		expect((await errorOf(onBox)).code).toBe('forbidden');
		expect(await rowsFor({ boxId })).toBe(0);

		expect((await trainer.delete(`/api/documents/${document.id}`)).status).toBe(204);
		expect(await rowsFor({ moduleId })).toBe(0);
	});

	it('a member can neither upload nor remove; a manager removes, and the link then opens nothing', async () => {
		const boxId = await makeBox();
		const moduleId = await makeModule('sop');
		const member = await signedIn(await makeUser('member'));
		const pdf = minimalPdf();

		const onBox = await upload(member, { title: unique('Member SOP'), boxId }, asPdf(pdf));
		expect(onBox.status).toBe(403);
		expect((await errorOf(onBox)).code).toBe('forbidden');
		const onModule = await upload(member, { title: unique('Member SOP'), moduleId }, asPdf(pdf));
		expect(onModule.status).toBe(403);
		expect(await rowsFor({ boxId })).toBe(0);
		expect(await rowsFor({ moduleId })).toBe(0);

		const manager = await signedIn(await makeUser('manager'));
		const { document } = await (
			await upload(manager, { title: unique('Regeneration SOP'), boxId }, asPdf(pdf))
		).json();
		const refused = await member.delete(`/api/documents/${document.id}`);
		expect(refused.status).toBe(403);
		expect((await errorOf(refused)).code).toBe('forbidden');
		expect(await rowsFor({ boxId })).toBe(1);

		expect((await manager.delete(`/api/documents/${document.id}`)).status).toBe(204);
		expect(await rowsFor({ boxId })).toBe(0);
		const gone = await member.get(`/documents/${document.id}`);
		expect(gone.status).toBe(404);
		expect((await errorOf(gone)).code).toBe('not_found');
		const again = await manager.delete(`/api/documents/${document.id}`);
		expect(again.status).toBe(404);
		expect((await errorOf(again)).code).toBe('not_found');
	});

	it('refuses what is not a whole PDF, too large or badly addressed, with clear messages, and stores nothing', async () => {
		const boxId = await makeBox();
		const manager = await signedIn(await makeUser('manager'));
		const title = unique('Leak test SOP');

		const renamedPng = await upload(manager, { title, boxId }, asPdf(png, 'scan.pdf'));
		expect(renamedPng.status).toBe(400);
		const pngError = await errorOf(renamedPng);
		expect(pngError.code).toBe('invalid_input');
		expect(pngError.details?.fields).toEqual({ file: 'That file is not a PDF.' });

		const empty = await upload(manager, { title, boxId }, asPdf(new Uint8Array(0), 'empty.pdf'));
		expect(empty.status).toBe(400);
		expect((await errorOf(empty)).details?.fields).toEqual({ file: 'That file is empty.' });

		const text = await upload(
			manager,
			{ title, boxId },
			{
				bytes: new TextEncoder().encode('1. Close the inner door.\n2. Evacuate.\n'),
				name: 'steps.txt',
				type: 'text/plain'
			}
		);
		expect(text.status).toBe(400);
		expect((await errorOf(text)).details?.fields).toEqual({ file: 'That file is not a PDF.' });

		const noFile = await upload(manager, { title, boxId });
		expect(noFile.status).toBe(400);
		expect((await errorOf(noFile)).details?.fields).toEqual({ file: 'Choose a PDF file.' });

		// 21 MB that would otherwise pass as a PDF: refused by its length, before it is read.
		const big = new Uint8Array(21 * 1024 * 1024);
		big.set(new TextEncoder().encode('%PDF-1.4\n'));
		big.set(new TextEncoder().encode('\n%%EOF\n'), big.length - 7);
		const tooBig = await upload(manager, { title, boxId }, asPdf(big, 'scanned-manual.pdf'));
		expect(tooBig.status).toBe(413);
		const bigError = await errorOf(tooBig);
		expect(bigError.code).toBe('too_large');
		expect(bigError.message).toBe('The document is larger than 20 MB.');

		const shortTitle = await upload(manager, { title: 'ab', boxId }, asPdf(minimalPdf()));
		expect(shortTitle.status).toBe(400);
		expect(Object.keys((await errorOf(shortTitle)).details?.fields ?? {})).toEqual(['title']);

		const moduleId = await makeModule('sop');
		const both = await upload(manager, { title, boxId, moduleId }, asPdf(minimalPdf()));
		expect(both.status).toBe(400);
		expect((await errorOf(both)).details?.fields).toHaveProperty('moduleId');
		const neither = await upload(manager, { title }, asPdf(minimalPdf()));
		expect(neither.status).toBe(400);

		const noBox = await upload(manager, { title, boxId: 2_000_000_000 }, asPdf(minimalPdf()));
		expect(noBox.status).toBe(404);
		expect((await errorOf(noBox)).code).toBe('not_found');

		expect(await rowsFor({ boxId })).toBe(0);
		expect(await rowsFor({ moduleId })).toBe(0);
	});

	it('an unknown document is 404 and signed out is 401, both in the error shape', async () => {
		const member = await signedIn(await makeUser('member'));
		for (const path of ['/documents/2000000000', '/documents/not-a-number']) {
			const r = await member.get(path);
			expect(r.status).toBe(404);
			expect((await errorOf(r)).code).toBe('not_found');
		}

		const boxId = await makeBox();
		const manager = await signedIn(await makeUser('manager'));
		const { document } = await (
			await upload(manager, { title: unique('Sensor calibration SOP'), boxId }, asPdf(minimalPdf()))
		).json();
		const anonymous = new Client();
		const signedOut = await anonymous.get(`/documents/${document.id}`);
		expect(signedOut.status).toBe(401);
		expect((await errorOf(signedOut)).code).toBe('unauthenticated');
		const post = await upload(anonymous, { title: unique('SOP'), boxId }, asPdf(minimalPdf()));
		expect(post.status).toBe(401);
		expect((await errorOf(post)).code).toBe('unauthenticated');
		expect((await anonymous.delete(`/api/documents/${document.id}`)).status).toBe(401);
		expect(await rowsFor({ boxId })).toBe(1);
	});
});

describe('damage photos', () => {
	it('open for the reporter, trainers and managers; 404 for another member, as for no photo', async () => {
		const boxId = await makeBox();
		const [left] = await fitGloves(boxId);
		const reporterUser = await makeUser('member');
		const reporter = await signedIn(reporterUser);
		const form = new FormData();
		form.set('location', 'fingertip');
		form.set('hand', 'left');
		form.set('holeSizeMm', '2');
		form.set('photo', new Blob([png], { type: 'image/png' }), 'hole.png');
		const reported = await reporter.request(
			'POST',
			`/boxes/${boxId}/ports/${left.id}/damage?/report`,
			form
		);
		expect(reported.status).toBe(200);
		const [inspection] = await testDb()
			.select()
			.from(gloveInspections)
			.where(eq(gloveInspections.byUserId, reporterUser.id));
		expect(inspection.photoKey).toMatch(/^gloves\/[0-9a-f]{32}\.png$/);
		const url = `/uploads/${inspection.photoKey}`;

		for (const client of [
			reporter,
			await signedIn(await makeUser('trainer')),
			await signedIn(await makeUser('manager'))
		]) {
			const r = await client.get(url);
			expect(r.status).toBe(200);
			expect(r.headers.get('content-type')).toBe('image/png');
			expect(r.headers.get('x-content-type-options')).toBe('nosniff');
			expect(Buffer.from(await r.arrayBuffer()).equals(Buffer.from(png))).toBe(true);
		}

		const other = await signedIn(await makeUser('member'));
		const hidden = await other.get(url);
		expect(hidden.status).toBe(404);
		const missing = await other.get(`/uploads/gloves/${'0'.repeat(32)}.png`);
		expect(missing.status).toBe(404);
		// Same answer either way, so a key says nothing about whether the photo exists.
		expect(await hidden.text()).toBe(await missing.text());

		// /uploads serves damage photos only: a document's stored file is not reachable there.
		const manager = await signedIn(await makeUser('manager'));
		const { document } = await (
			await upload(manager, { title: unique('Glove change SOP'), boxId }, asPdf(minimalPdf()))
		).json();
		const [doc] = await testDb().select().from(documents).where(eq(documents.id, document.id));
		expect((await manager.get(`/uploads/${doc.storageKey}`)).status).toBe(404);

		// Signed out, the pages' rule: off to sign-in.
		expect((await new Client().get(url)).status).toBe(303);
	});
});
