/**
 * Outgoing mail through nodemailer over SMTP. In development and tests SMTP_URL points at the local sink
 * (scripts/mail-sink.ts); in production it names the lab's real mail server.
 */
import nodemailer, { type Transporter } from 'nodemailer';
import { config } from '../config';

let transporter: Transporter | undefined;

function transport(): Transporter {
	transporter ??= nodemailer.createTransport(config.smtpUrl);
	return transporter;
}

export interface OutgoingMail {
	to: string | string[];
	subject: string;
	text: string;
}

export async function sendMail(mail: OutgoingMail): Promise<void> {
	await transport().sendMail({ from: config.mailFrom, to: mail.to, subject: mail.subject, text: mail.text });
}
