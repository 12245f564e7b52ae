/** The Outbox: mail captured by the local mail fake, newest first. */
import { desc, eq, like } from 'drizzle-orm';
import { z } from 'zod';
import type { Db } from '$lib/server/db';
import { outboxMessages } from '$lib/server/db/schema';

export const outboxQuerySchema = z
	.object({
		to: z.string().trim().max(254).optional(),
		limit: z.coerce.number().int().min(1).max(500).default(100)
	})
	.strict();

export async function list(db: Db, query: z.infer<typeof outboxQuerySchema>) {
	const base = db
		.select({
			id: outboxMessages.id,
			from: outboxMessages.fromAddress,
			to: outboxMessages.toAddresses,
			subject: outboxMessages.subject,
			text: outboxMessages.textBody,
			sizeBytes: outboxMessages.sizeBytes,
			receivedAt: outboxMessages.receivedAt
		})
		.from(outboxMessages);
	const escaped = query.to?.replace(/[\\%_]/g, (c) => '\\' + c);
	const filtered = escaped ? base.where(like(outboxMessages.toAddresses, `%${escaped}%`)) : base;
	return filtered.orderBy(desc(outboxMessages.receivedAt), desc(outboxMessages.id)).limit(query.limit);
}

export async function get(db: Db, id: number) {
	const [row] = await db.select().from(outboxMessages).where(eq(outboxMessages.id, id)).limit(1);
	return row ?? null;
}
