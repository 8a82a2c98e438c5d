import { simpleParser } from 'mailparser';
import nodemailer, { type Transporter } from 'nodemailer';
import { SMTPServer } from 'smtp-server';
import { db } from './db';
import { outgoingMail } from './db/schema';
import { newId } from './ids';

/*
 * Mail goes through nodemailer. Without SMTP_URL it is delivered to a real SMTP
 * server that this process starts on localhost, which stores every message in the
 * outgoing_mail table for /admin/outbox; with SMTP_URL it goes through that relay
 * and a copy is kept in the same table.
 */

const FROM = process.env.MAIL_FROM ?? 'Lockstep <no-reply@lockstep.localhost>';
let localServer: SMTPServer | undefined;
let transporter: Transporter | undefined;
let started: Promise<void> | undefined;
/** Workspace of each message in flight, by Message-ID, for the local server to file it under. */
const pendingWorkspace = new Map<string, string | null>();

function localPort(): number {
	return Number(process.env.LOCAL_SMTP_PORT ?? 2525);
}

export function startMail(): Promise<void> {
	started ??= (async () => {
		if (process.env.SMTP_URL) {
			transporter = nodemailer.createTransport(process.env.SMTP_URL);
			console.log('Mail: sending through the relay in SMTP_URL');
			return;
		}
		localServer = new SMTPServer({
			authOptional: true,
			disabledCommands: ['STARTTLS'],
			banner: 'Lockstep local mail',
			onData(stream, _session, callback) {
				simpleParser(stream)
					.then((parsed) => {
						const messageId = parsed.messageId ?? null;
						const to = Array.isArray(parsed.to) ? parsed.to.map((a) => a.text).join(', ') : (parsed.to?.text ?? '');
						db.insert(outgoingMail)
							.values({
								id: newId(),
								workspaceId: (messageId && pendingWorkspace.get(messageId)) || null,
								fromAddress: parsed.from?.text ?? FROM,
								toAddress: to,
								subject: parsed.subject ?? '',
								textBody: parsed.text ?? '',
								htmlBody: typeof parsed.html === 'string' ? parsed.html : null,
								messageId,
								transport: 'local'
							})
							.run();
						if (messageId) pendingWorkspace.delete(messageId);
						callback();
					})
					.catch((err: Error) => callback(err));
			}
		});
		const server = localServer;
		const listen = (port: number) =>
			new Promise<number>((resolve, reject) => {
				server.once('error', reject);
				server.listen(port, '127.0.0.1', () => {
					server.off('error', reject);
					const address = server.server.address();
					resolve(typeof address === 'object' && address ? address.port : port);
				});
			});
		// Another Lockstep (or anything) on the usual port must not stop this one: take a free port.
		const port = await listen(localPort()).catch((error: NodeJS.ErrnoException) => {
			if (error.code !== 'EADDRINUSE') throw error;
			console.warn(`Mail: port ${localPort()} is taken; the local SMTP server uses a free port instead`);
			return listen(0);
		});
		transporter = nodemailer.createTransport({
			host: '127.0.0.1',
			port,
			secure: false,
			ignoreTLS: true
		});
		console.log(`Mail: local SMTP server on 127.0.0.1:${port}, messages shown in /admin/outbox`);
	})();
	return started;
}

export function stopMail(): Promise<void> {
	const server = localServer;
	localServer = undefined;
	started = undefined;
	transporter = undefined;
	return new Promise((resolve) => (server ? server.close(() => resolve()) : resolve()));
}

export interface MailMessage {
	to: string;
	subject: string;
	text: string;
	html?: string;
	workspaceId?: string | null;
}

export async function sendMail(message: MailMessage): Promise<void> {
	await startMail();
	if (!transporter) throw new Error('Mail is not configured.');
	const messageId = `<${newId()}@lockstep.localhost>`;
	pendingWorkspace.set(messageId, message.workspaceId ?? null);
	await transporter.sendMail({ from: FROM, to: message.to, subject: message.subject, text: message.text, html: message.html, messageId });
	if (process.env.SMTP_URL) {
		db.insert(outgoingMail)
			.values({
				id: newId(),
				workspaceId: message.workspaceId ?? null,
				fromAddress: FROM,
				toAddress: message.to,
				subject: message.subject,
				textBody: message.text,
				htmlBody: message.html ?? null,
				messageId,
				transport: 'relay'
			})
			.run();
	}
}
