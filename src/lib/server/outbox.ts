import { and, desc, eq, inArray, isNull, or, sql } from 'drizzle-orm';
import { db } from './db';
import { memberships, outgoingMail, users } from './db/schema';
import { Refusal } from './refusal';
import type { WorkspaceScope } from './scope';

/*
 * What an admin may read of the outgoing mail: the workspace's own mail (invitations),
 * and personal mail (password resets, stored without a workspace) addressed to a member
 * of this workspace. Personal mail that went out through a real relay shows its
 * envelope only: its links are for the person, not for their admins.
 */

function visibleTo(scope: WorkspaceScope) {
	const memberEmails = db
		.select({ email: users.email })
		.from(memberships)
		.innerJoin(users, eq(users.id, memberships.userId))
		.where(eq(memberships.workspaceId, scope.workspaceId));
	return or(
		eq(outgoingMail.workspaceId, scope.workspaceId),
		and(isNull(outgoingMail.workspaceId), inArray(sql`lower(${outgoingMail.toAddress})`, memberEmails))
	);
}

export interface OutboxEntry {
	id: string;
	toAddress: string;
	subject: string;
	createdAt: Date;
	transport: 'local' | 'relay';
	personal: boolean;
}

export function listOutbox(scope: WorkspaceScope, limit = 200): OutboxEntry[] {
	return db
		.select({
			id: outgoingMail.id,
			toAddress: outgoingMail.toAddress,
			subject: outgoingMail.subject,
			createdAt: outgoingMail.createdAt,
			transport: outgoingMail.transport,
			personal: sql<boolean>`${outgoingMail.workspaceId} is null`.mapWith(Boolean)
		})
		.from(outgoingMail)
		.where(visibleTo(scope))
		.orderBy(desc(outgoingMail.createdAt), sql`${outgoingMail}.rowid desc`)
		.limit(limit)
		.all();
}

export interface OutboxMessage extends OutboxEntry {
	fromAddress: string;
	/** Null when the body is withheld (personal mail sent through a real relay). */
	textBody: string | null;
	/** The HTML version, when the message had one; withheld like the text. */
	htmlBody: string | null;
}

export function outboxMessage(scope: WorkspaceScope, id: string): OutboxMessage {
	const row = db
		.select()
		.from(outgoingMail)
		.where(and(eq(outgoingMail.id, id), visibleTo(scope)))
		.get();
	if (!row) throw new Refusal('not_found', 'No such message in this workspace’s outbox.', 404);
	const personal = row.workspaceId === null;
	return {
		id: row.id,
		toAddress: row.toAddress,
		fromAddress: row.fromAddress,
		subject: row.subject,
		createdAt: row.createdAt,
		transport: row.transport,
		personal,
		textBody: personal && row.transport === 'relay' ? null : row.textBody,
		htmlBody: personal && row.transport === 'relay' ? null : row.htmlBody
	};
}
