/** Runs the local SMTP sink on 127.0.0.1:SMTP_SINK_PORT, storing every message in the database. */
import { db } from '../src/lib/server/db/index';
import { startMailSink } from '../src/lib/server/mail/sink';

const port = Number(process.env.SMTP_SINK_PORT ?? 2526);
try {
	await startMailSink(db, port);
	console.log(`[escapement] mail sink listening on 127.0.0.1:${port}`);
} catch (err) {
	console.error(`[escapement] the mail sink could not listen on 127.0.0.1:${port}: ${(err as Error).message}. Set SMTP_SINK_PORT to a free port.`);
	process.exit(1);
}
