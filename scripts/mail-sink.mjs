// The local mail sink of `npm start` and `npm test`: an SMTP server on loopback that keeps
// every message as an .eml file. While a file named `paused` sits in the folder it answers
// 421 (service not available), as a real server that is down for maintenance would.
import { SMTPServer } from 'smtp-server';
import { existsSync, mkdirSync, writeFileSync } from 'node:fs';
import { randomBytes } from 'node:crypto';
import { join } from 'node:path';

const dir = process.env.MAIL_SINK_DIR;
const port = Number(process.env.SMTP_PORT ?? 2525);
if (!dir) {
	console.error('[mail-sink] MAIL_SINK_DIR is not set');
	process.exit(1);
}
mkdirSync(dir, { recursive: true });

function pausedError() {
	if (!existsSync(join(dir, 'paused'))) return undefined;
	return Object.assign(new Error('Mail sink paused'), { responseCode: 421 });
}

const server = new SMTPServer({
	authOptional: true,
	disabledCommands: ['STARTTLS', 'AUTH'],
	banner: 'Boxwright local mail sink',
	size: 25 * 1024 * 1024,
	// Checked per connection and per message, so connections a client keeps open are
	// refused too.
	onConnect(_session, callback) {
		callback(pausedError());
	},
	onMailFrom(_address, _session, callback) {
		callback(pausedError());
	},
	onData(stream, _session, callback) {
		const chunks = [];
		stream.on('data', (c) => chunks.push(c));
		stream.on('end', () => {
			const name = `${Date.now()}-${randomBytes(4).toString('hex')}.eml`;
			writeFileSync(join(dir, name), Buffer.concat(chunks));
			callback();
		});
	}
});
server.on('error', (e) => console.error('[mail-sink]', e.message));
server.listen(port, '127.0.0.1', () =>
	console.log(`[mail-sink] listening on 127.0.0.1:${port}, saving to ${dir}`)
);
const stop = () => server.close(() => process.exit(0));
process.on('SIGTERM', stop);
process.on('SIGINT', stop);
