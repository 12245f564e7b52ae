/** OpenAPI paths of imports, exports, datasheets and stock takes (multipart uploads and CSV answers). */
import { z } from 'zod';
import { CONDITIONS } from '$lib/server/db/schema';
import { listQuerySchema as importListQuerySchema, reportQuerySchema } from '$lib/server/imports/service';
import { stockExportQuerySchema } from '$lib/server/imports/export';
import { listQuerySchema as partListQuerySchema } from '$lib/server/catalogue/list';
import { matchInputSchema } from '$lib/server/files/datasheets';
import { bytesResponse, errors, jsonBody, jsonResponse, multipartBody, queryParams, type OpenApiPaths } from './build';

const int = z.number().int();
const dateTime = z.string().meta({ format: 'date-time' });

const rowError = z.looseObject({
	row: int.describe('Row of the file; the header is row 1, so data rows start at 2 (blank lines are not counted).'),
	column: z.string().describe('Header name of the column (or the field name when it is not in the file).'),
	value: z.string(),
	message: z.string()
});

const importReport = z.looseObject({
	id: int,
	status: z.enum(['uploaded', 'checking', 'checked', 'committing', 'committed', 'failed']),
	interrupted: z.boolean().optional().describe('A step was running but stopped reporting (the app restarted); it may be started again.'),
	filename: z.string().optional(),
	header: z.array(z.string()).optional(),
	mapping: z.record(z.string(), z.string()).optional().describe('Glasscrib field → column of the file.'),
	units: z.record(z.string(), z.enum(['mm', 'in', 'minor', 'major'])).optional(),
	rowsTotal: int.nullable().optional(),
	rowsDone: int.optional().describe('Rows handled by the current or last step (progress).'),
	counts: z.looseObject({ created: int, updated: int, unchanged: int, rejected: int }),
	errorCount: int.optional(),
	errors: z.array(rowError),
	message: z.string().nullable().optional()
});

const datasheet = z.looseObject({
	id: int,
	partId: int,
	filename: z.string().describe('The uploaded file name, for display only.'),
	contentType: z.enum(['application/pdf', 'image/png', 'image/jpeg']),
	kind: z.enum(['document', 'photo']).optional(),
	sizeBytes: int,
	sha256: z.string(),
	uploadedAt: dateTime.optional(),
	uploadedBy: z.looseObject({ id: int, name: z.string().nullable() }).optional(),
	downloadUrl: z.string(),
	thumbnailUrl: z.string().nullable().optional(),
	thumbnail: z.looseObject({ width: int, height: int }).nullable().optional()
});

const stockTakeResult = z.looseObject({
	dryRun: z.boolean(),
	countedOn: z.string().describe('the count date ("3 Dec 2026")'),
	lines: z.array(
		z.looseObject({
			row: int,
			locationId: int,
			locationCode: z.string(),
			partId: int,
			sku: z.string(),
			name: z.string(),
			condition: z.enum(CONDITIONS),
			booked: int,
			counted: int,
			difference: int.describe('counted − booked')
		})
	),
	totals: z.looseObject({ lines: int, differences: int, unitsFound: int, unitsMissing: int }),
	movements: z.array(int).optional()
});

const datasheetId = { name: 'id', in: 'path', required: true, description: 'Datasheet id', schema: { type: 'integer', minimum: 1 } };

export const importsPaths: OpenApiPaths = {
	'/imports': {
		get: { summary: 'Import history, newest first', parameters: queryParams(importListQuerySchema), responses: { '200': jsonResponse('Imports'), ...errors(400, 401, 403) } },
		post: {
			summary: 'Import a CSV of parts in one go (dry run or commit)',
			description:
				'CSV up to 16 MB and 100,000 rows, UTF-8 with or without BOM, comma, semicolon or tab. Rows are matched to parts by ' +
				'(supplier, supplier part number), then by SKU. A commit runs in one transaction: if any row is rejected nothing is written ' +
				'(unless skipRejected). A file whose header uses the export names needs no mapping.',
			requestBody: multipartBody('The CSV file', {
				supplier: { type: 'string', description: 'Supplier name for rows without their own' },
				mapping: { type: 'string', description: 'JSON: Glasscrib field → column name' },
				units: {
					type: 'string',
					description:
						'JSON: length field → "mm" | "in"; unitPrice → "major" (currency units, 38.50) | "minor" (cents, 3850). Without it the header decides (`unitPrice`, a currency name: currency units; `unitPriceMinor`, "cents": cents), else the values (any with decimals: currency units); a price column whose unit cannot be told is refused (400, units.unitPrice)'
				},
				skuPrefix: { type: 'string', description: 'New parts without a SKU get prefix + supplier part number' },
				skipRejected: { type: 'boolean' },
				dryRun: { type: 'boolean' }
			}),
			responses: { '200': jsonResponse('Dry run report', importReport), '201': jsonResponse('Committed', importReport), ...errors(400, 401, 403, 409, 413, 415, 503) }
		}
	},
	'/imports/{id}': {
		get: {
			summary: 'One import: status, progress, counts and row errors',
			parameters: queryParams(reportQuerySchema, { errors: 'How many row errors to include' }),
			responses: { '200': jsonResponse('The import', importReport), ...errors(400, 401, 403, 404) }
		}
	},
	'/imports/{id}/errors.csv': {
		get: { summary: 'The row errors of an import as CSV (row, column, value, message)', responses: { '200': bytesResponse('CSV', 'text/csv'), ...errors(400, 401, 403, 404) } }
	},
	'/parts/export.csv': {
		get: {
			summary: 'The catalogue as CSV (same filters and sort as GET /parts, all pages)',
			description: "Header: Part JSON names, surfaces flattened as r1Mm, t1Mm, material1, r2Mm, ...; text cells starting with = + - @ tab or CR get a leading '.",
			parameters: queryParams(partListQuerySchema),
			responses: { '200': bytesResponse('CSV', 'text/csv'), ...errors(400, 401) }
		}
	},
	'/stock/export.csv': {
		get: { summary: 'Stock by location as CSV', parameters: queryParams(stockExportQuerySchema), responses: { '200': bytesResponse('CSV', 'text/csv'), ...errors(400, 401) } }
	},
	'/parts/{id}/datasheets': {
		get: { summary: 'Datasheets and photos of a part', responses: { '200': jsonResponse('Datasheets'), ...errors(400, 401) } },
		post: {
			summary: 'Upload a datasheet (PDF, up to 25 MB) or photo (PNG or JPEG, up to 15 MB and 30 megapixels: more gives 413 image-too-large)',
			description: 'The type is read from the magic bytes, not the name; SVG, HTML and others are refused. Photos get a thumbnail. 503 when the file store is down (nothing is saved).',
			requestBody: multipartBody('The file'),
			responses: { '201': jsonResponse('The datasheet', datasheet), ...errors(400, 401, 403, 404, 413, 415, 503) }
		}
	},
	'/datasheets/{id}': {
		get: {
			summary: 'Download a datasheet (streamed, as an attachment), or view it inline with ?view=inline (browser viewer, sandbox CSP)',
			parameters: [datasheetId, { name: 'view', in: 'query', required: false, schema: { type: 'string', enum: ['inline'] } }],
			responses: { '200': bytesResponse('The bytes', 'application/octet-stream'), ...errors(400, 401, 404, 503) }
		},
		delete: { summary: 'Delete a datasheet and its stored file', parameters: [datasheetId], responses: { '204': { description: 'Deleted' }, ...errors(400, 401, 403, 404, 503) } }
	},
	'/datasheets/{id}/thumbnail': {
		get: { summary: 'The PNG thumbnail of a photo', parameters: [datasheetId], responses: { '200': bytesResponse('PNG', 'image/png'), ...errors(400, 401, 404, 503) } }
	},
	'/stock-takes': {
		post: {
			summary: 'Stock take from a counted CSV (admin, stockroom)',
			description:
				'Columns `locationCode, sku, condition, quantity` (condition may be empty: usable; quantity ≥ 0). The dry run answers each line with booked, counted and difference. ' +
				'The commit writes one `adjust` movement per difference with the reason "stock take" and the count date in the note, all in one transaction (part rows locked, booked figures read again under the locks). ' +
				'Any refused line (unknown location or SKU, archived part, a line given twice, a bad count): 400 `invalid-lines` listing every refused line, nothing written.',
			requestBody: multipartBody('The count (CSV, UTF-8)', { dryRun: { type: 'boolean', description: 'true: compare only, write nothing' } }),
			responses: {
				'200': jsonResponse('Dry run: the comparison', stockTakeResult),
				'201': jsonResponse('Committed: the comparison and the movement ids written', stockTakeResult),
				...errors(400, 401, 403, 413)
			}
		}
	},
	'/datasheets/match': {
		post: {
			summary: 'Bulk attach: match file names to parts by SKU',
			requestBody: jsonBody(matchInputSchema),
			responses: { '200': jsonResponse('Matches: each file name with its part or null'), ...errors(400, 401, 403, 415) }
		}
	}
};
