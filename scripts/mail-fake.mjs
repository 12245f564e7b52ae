// The local mail fake: an SMTP catcher on loopback that stores every message in the
// outbox_messages table, so /admin/outbox and GET /api/v1/outbox can list them.
// Usage: DATABASE_URL=... node scripts/mail-fake.mjs --port 2525
// The greeting ends with GLASSCRIB_SERVICE_ID, so that `npm start` can tell this process from another
// program on the port.
import { SMTPServer } from 'smtp-server';
import { simpleParser } from 'mailparser';
import mysql from 'mysql2/promise';
import { parseArgs } from 'node:util';

const { values } = parseArgs({ options: { port: { type: 'string', default: '2525' } } });
const url = process.env.DATABASE_URL;
if (!url) {
	console.error('DATABASE_URL is not set');
	process.exit(1);
}
const pool = mysql.createPool({ uri: url, connectionLimit: 2 });
const MAX_BYTES = 10 * 1024 * 1024;

const server = new SMTPServer({
	authOptional: true,
	disabledCommands: ['STARTTLS'],
	size: MAX_BYTES,
	banner: `Glasscrib mail fake ${process.env.GLASSCRIB_SERVICE_ID ?? ''}`.trim(),
	onData(stream, session, callback) {
		const chunks = [];
		let size = 0;
		stream.on('data', (c) => {
			size += c.length;
			chunks.push(c);
		});
		stream.on('end', async () => {
			try {
				const raw = Buffer.concat(chunks);
				const mail = await simpleParser(raw);
				const to = session.envelope.rcptTo.map((r) => r.address).join(', ');
				await pool.query(
					'INSERT INTO outbox_messages (message_id, from_address, to_addresses, subject, text_body, html_body, size_bytes, received_at) VALUES (?, ?, ?, ?, ?, ?, ?, ?)',
					[
						mail.messageId ?? null,
						session.envelope.mailFrom ? session.envelope.mailFrom.address : '',
						to.slice(0, 2000),
						(mail.subject ?? '').slice(0, 500),
						mail.text ?? null,
						typeof mail.html === 'string' ? mail.html : null,
						size,
						new Date()
					]
				);
				callback();
			} catch (err) {
				console.error('mail fake could not store a message:', err.message);
				callback(new Error('could not store the message'));
			}
		});
	}
});
let listening = false;
server.on('error', (err) => {
	console.error('mail fake error:', err.message);
	// Not listening (port taken): exit, so that whoever started us sees it instead of a silent gap.
	if (!listening) process.exit(1);
});
server.listen(Number(values.port), '127.0.0.1', () => {
	listening = true;
	console.log(`mail fake listening on smtp://127.0.0.1:${values.port}`);
});
const stop = () => server.close(async () => {
	await pool.end();
	process.exit(0);
});
process.on('SIGTERM', stop);
process.on('SIGINT', stop);
