import { char, index, int, mysqlEnum, mysqlTable, timestamp, uniqueIndex, varchar } from 'drizzle-orm/mysql-core';
import { id, ref } from './columns';
import { users } from './auth';
import { parts } from './catalogue';


/** What an uploaded file is, decided by its magic bytes (never by its name). */
export const DATASHEET_TYPES = ['application/pdf', 'image/png', 'image/jpeg', 'image/webp'] as const;
export type DatasheetType = (typeof DATASHEET_TYPES)[number];

/**
 * Datasheets and photos of a part. The bytes live in S3 under `s3Key` (`datasheets/<random UUID>`);
 * images also get a PNG thumbnail under `thumbnailKey`. `filename` is the client's name, for display only.
 */
export const datasheets = mysqlTable(
	'datasheets',
	{
		id: id(),
		partId: ref('part_id')
			.notNull()
			.references(() => parts.id, { onDelete: 'cascade' }),
		s3Key: varchar('s3_key', { length: 200 }).notNull(),
		thumbnailKey: varchar('thumbnail_key', { length: 200 }),
		thumbnailWidth: int('thumbnail_width'),
		thumbnailHeight: int('thumbnail_height'),
		filename: varchar('filename', { length: 255 }).notNull(),
		contentType: mysqlEnum('content_type', DATASHEET_TYPES).notNull(),
		sizeBytes: int('size_bytes', { unsigned: true }).notNull(),
		sha256: char('sha256', { length: 64 }).notNull(),
		uploadedBy: ref('uploaded_by')
			.notNull()
			.references(() => users.id),
		uploadedAt: timestamp('uploaded_at').notNull().defaultNow()
	},
	(t) => [uniqueIndex('datasheets_s3_key_uq').on(t.s3Key), index('datasheets_part_idx').on(t.partId, t.uploadedAt)]
);

export type Datasheet = typeof datasheets.$inferSelect;
