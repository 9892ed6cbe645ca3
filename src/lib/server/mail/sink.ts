/**
 * The local mail sink: an SMTP server on loopback that accepts every message and stores it in caught_mail,
 * where lab leads can read it in the app. Used by `npm start`, `npm run dev` and `npm test` instead of a mail service.
 */
import { SMTPServer } from 'smtp-server';
import { simpleParser } from 'mailparser';
import type { Db } from '../db';
import { schema } from '../db';

const MAX_MESSAGE_BYTES = 2 * 1024 * 1024;

export function startMailSink(db: Db, port: number, host = '127.0.0.1'): Promise<SMTPServer> {
	const server = new SMTPServer({
		authOptional: true,
		disabledCommands: ['STARTTLS'],
		size: MAX_MESSAGE_BYTES,
		banner: 'Escapement mail sink',
		onData(stream, session, callback) {
			const chunks: Buffer[] = [];
			stream.on('data', (chunk: Buffer) => chunks.push(chunk));
			stream.on('end', async () => {
				const bytes = Buffer.concat(chunks);
				const parsed = await simpleParser(bytes).catch(() => null);
				db.insert(schema.caughtMail)
					.values({
						envelopeFrom: session.envelope.mailFrom ? session.envelope.mailFrom.address : '',
						envelopeTo: session.envelope.rcptTo.map((r) => r.address.toLowerCase()),
						subject: parsed?.subject ?? '',
						textBody: (parsed?.text ?? '').trim(),
						raw: bytes.toString('utf8')
					})
					.then(
						() => callback(),
						(err: Error) => callback(err)
					);
			});
		}
	});
	return new Promise((resolve, reject) => {
		server.once('error', reject);
		server.listen(port, host, () => resolve(server));
	});
}
