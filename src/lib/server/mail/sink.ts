// Reads the local mail sink's folder (development and tests only; MAIL_SINK_DIR is set by
// the scripts that start the sink), and decodes its messages with mailparser for the
// development mail page: encoded words, quoted-printable and base64 parts, attachments.
import { readdir, readFile, stat } from 'node:fs/promises';
import { join } from 'node:path';
import { simpleParser, type AddressObject } from 'mailparser';
import { config } from '../config';

export function sinkDir(): string | null {
	return config.mailSinkDir;
}

/** "Name <a@b>, c@d": one or more address headers as plain text. */
function addresses(value: AddressObject | AddressObject[] | undefined): string {
	return (Array.isArray(value) ? value : value ? [value] : []).map((a) => a.text).join(', ');
}

/** When the sink caught a message: its file name starts with the time in ms. */
async function caughtAt(dir: string, name: string): Promise<Date> {
	const ms = Number(/^(\d{12,})-/.exec(name)?.[1]);
	return Number.isFinite(ms) ? new Date(ms) : (await stat(join(dir, name))).mtime;
}

/** The newest messages first, their headers decoded (the bodies are not parsed). */
export async function listSink(limit = 200) {
	const dir = sinkDir();
	if (!dir) return null;
	const names = (await readdir(dir).catch(() => [])).filter((n) => /^[\w-]+\.eml$/.test(n));
	names.sort().reverse();
	return Promise.all(
		names.slice(0, limit).map(async (name) => {
			const raw = await readFile(join(dir, name));
			// The header block alone is enough for the list, and quick to parse.
			const end = raw.indexOf('\r\n\r\n') >= 0 ? raw.indexOf('\r\n\r\n') : raw.indexOf('\n\n');
			const head = await simpleParser(end >= 0 ? raw.subarray(0, end + 2) : raw);
			return {
				name,
				at: await caughtAt(dir, name),
				from: addresses(head.from),
				to: addresses(head.to),
				subject: head.subject ?? ''
			};
		})
	);
}

/** One message's raw text; only plain file names from the listing are accepted. */
export async function readSink(name: string): Promise<string | null> {
	const dir = sinkDir();
	if (!dir || !/^[\w-]+\.eml$/.test(name)) return null;
	return readFile(join(dir, name), 'utf8').catch(() => null);
}

/** One message decoded: who, what, when, its text and what is attached. */
export async function decodeSink(raw: string) {
	const mail = await simpleParser(raw);
	return {
		from: addresses(mail.from),
		to: addresses(mail.to),
		cc: addresses(mail.cc),
		replyTo: addresses(mail.replyTo),
		subject: mail.subject ?? '',
		date: mail.date ?? null,
		messageId: mail.messageId ?? '',
		text: mail.text ?? '',
		html: typeof mail.html === 'string' ? mail.html : '',
		attachments: mail.attachments.map((a) => ({
			// A calendar part inside multipart/alternative has no file name of its own.
			name: a.filename ?? '',
			type: a.contentType,
			size: a.size,
			inline: a.contentDisposition !== 'attachment'
		}))
	};
}

export type DecodedMail = Awaited<ReturnType<typeof decodeSink>>;
