/**
 * Server configuration from the environment, read once. A missing required variable fails fast with a message
 * that says how to set it (scripts/lib.sh sets all of them for `npm start`, `npm run dev` and `npm test`).
 */
function required(name: string, hint: string): string {
	const value = process.env[name];
	if (!value) throw new Error(`config: ${name} is not set. ${hint}`);
	return value;
}

export const config = {
	get databaseUrl() {
		return required('DATABASE_URL', 'Start the app with `npm start` or `npm run dev`, which set it for the local cluster.');
	},
	get authSecret() {
		return required('AUTH_SECRET', 'Set AUTH_SECRET to a long random string (`npm start` keeps one in .data/auth-secret).');
	},
	/** smtp://host:port of the mail server; the local sink in development and tests. */
	get smtpUrl() {
		return process.env.SMTP_URL ?? `smtp://127.0.0.1:${process.env.SMTP_SINK_PORT ?? '2526'}`;
	},
	get mailFrom() {
		return process.env.MAIL_FROM ?? 'Escapement <no-reply@escapement.invalid>';
	},
	get origin() {
		return process.env.ORIGIN ?? 'http://127.0.0.1:5180';
	},
	/** The server's Ed25519 private key (PEM), outside the database; scripts/lib.sh makes `.data/signing-key.pem`. */
	get signingKeyFile() {
		return process.env.SIGNING_KEY_FILE ?? '.data/signing-key.pem';
	},
	get isTest() {
		return process.env.ESCAPEMENT_ENV === 'test';
	}
};
