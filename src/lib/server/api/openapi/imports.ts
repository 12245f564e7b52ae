import type { OpenApiPaths } from './types';
import { errors, jsonBody, jsonResponse } from './types';

const idParam = (description: string) => ({ name: 'id', in: 'path', required: true, description, schema: { type: 'integer', minimum: 1 } });

const rowError = {
	type: 'object',
	required: ['row', 'column', 'value', 'message'],
	properties: {
		row: { type: 'integer', description: 'Row of the file; the header is row 1, so data rows start at 2 (blank lines are not counted).' },
		column: { type: 'string', description: 'Header name of the column (or the field name when it is not in the file).' },
		value: { type: 'string' },
		message: { type: 'string' }
	}
};

const importReport = {
	type: 'object',
	required: ['id', 'status', 'counts', 'errors'],
	properties: {
		id: { type: 'integer' },
		status: { type: 'string', enum: ['uploaded', 'checking', 'checked', 'committing', 'committed', 'failed'] },
		interrupted: { type: 'boolean', description: 'A step was running but stopped reporting (the app restarted); it may be started again.' },
		filename: { type: 'string' },
		header: { type: 'array', items: { type: 'string' } },
		mapping: { type: 'object', additionalProperties: { type: 'string' }, description: 'Glasscrib field → column of the file.' },
		units: { type: 'object', additionalProperties: { type: 'string', enum: ['mm', 'in', 'minor', 'major'] } },
		rowsTotal: { type: ['integer', 'null'] },
		rowsDone: { type: 'integer', description: 'Rows handled by the current or last step (progress).' },
		counts: {
			type: 'object',
			required: ['created', 'updated', 'unchanged', 'rejected'],
			properties: { created: { type: 'integer' }, updated: { type: 'integer' }, unchanged: { type: 'integer' }, rejected: { type: 'integer' } }
		},
		errorCount: { type: 'integer' },
		errors: { type: 'array', items: rowError },
		message: { type: ['string', 'null'] }
	}
};

const datasheet = {
	type: 'object',
	required: ['id', 'partId', 'filename', 'contentType', 'sizeBytes', 'sha256', 'downloadUrl'],
	properties: {
		id: { type: 'integer' },
		partId: { type: 'integer' },
		filename: { type: 'string', description: 'The uploaded file name, for display only.' },
		contentType: { type: 'string', enum: ['application/pdf', 'image/png', 'image/jpeg'] },
		kind: { type: 'string', enum: ['document', 'photo'] },
		sizeBytes: { type: 'integer' },
		sha256: { type: 'string' },
		uploadedAt: { type: 'string', format: 'date-time' },
		uploadedBy: { type: 'object', properties: { id: { type: 'integer' }, name: { type: ['string', 'null'] } } },
		downloadUrl: { type: 'string' },
		thumbnailUrl: { type: ['string', 'null'] },
		thumbnail: { type: ['object', 'null'], properties: { width: { type: 'integer' }, height: { type: 'integer' } } }
	}
};

const multipartFile = (extra: Record<string, unknown> = {}, description = 'The file') => ({
	required: true,
	content: {
		'multipart/form-data': {
			schema: { type: 'object', required: ['file'], properties: { file: { type: 'string', format: 'binary', description }, ...extra } }
		}
	}
});

const stockTakeResult = {
	type: 'object',
	properties: {
		dryRun: { type: 'boolean' },
		countedOn: { type: 'string', description: 'the count date ("3 Dec 2026")' },
		lines: {
			type: 'array',
			items: {
				type: 'object',
				properties: {
					row: { type: 'integer' },
					locationId: { type: 'integer' },
					locationCode: { type: 'string' },
					partId: { type: 'integer' },
					sku: { type: 'string' },
					name: { type: 'string' },
					condition: { type: 'string', enum: ['usable', 'quarantine', 'damaged'] },
					booked: { type: 'integer' },
					counted: { type: 'integer' },
					difference: { type: 'integer', description: 'counted − booked' }
				}
			}
		},
		totals: { type: 'object', properties: { lines: { type: 'integer' }, differences: { type: 'integer' }, unitsFound: { type: 'integer' }, unitsMissing: { type: 'integer' } } },
		movements: { type: 'array', items: { type: 'integer' } }
	}
};

const csvResponse = (description: string) => ({ description, content: { 'text/csv': { schema: { type: 'string' } } } });

export const importsPaths: OpenApiPaths = {
	'/imports': {
		get: {
			summary: 'Import history, newest first',
			parameters: [
				{ name: 'page', in: 'query', schema: { type: 'integer', minimum: 1 } },
				{ name: 'pageSize', in: 'query', schema: { type: 'integer', minimum: 1, maximum: 200 } }
			],
			responses: { '200': jsonResponse('Imports'), ...errors(400, 401, 403) }
		},
		post: {
			summary: 'Import a CSV of parts in one go (dry run or commit)',
			description:
				'CSV up to 16 MB and 100,000 rows, UTF-8 with or without BOM, comma, semicolon or tab. Rows are matched to parts by ' +
				'(supplier, supplier part number), then by SKU. A commit runs in one transaction: if any row is rejected nothing is written ' +
				'(unless skipRejected). A file whose header uses the export names needs no mapping.',
			requestBody: multipartFile(
				{
					supplier: { type: 'string', description: 'Supplier name for rows without their own' },
					mapping: { type: 'string', description: 'JSON: Glasscrib field → column name' },
					units: { type: 'string', description: 'JSON: length field → "mm" | "in"; unitPrice → "major" (currency units, 38.50) | "minor" (cents, 3850). Without it the header decides (`unitPrice`, a currency name: currency units; `unitPriceMinor`, "cents": cents), else the values (any with decimals: currency units); a price column whose unit cannot be told is refused (400, units.unitPrice)' },
					skuPrefix: { type: 'string', description: 'New parts without a SKU get prefix + supplier part number' },
					skipRejected: { type: 'boolean' },
					dryRun: { type: 'boolean' }
				},
				'The CSV file'
			),
			responses: {
				'200': jsonResponse('Dry run report', importReport),
				'201': jsonResponse('Committed', importReport),
				...errors(400, 401, 403, 409, 413, 415, 503)
			}
		}
	},
	'/imports/{id}': {
		get: {
			summary: 'One import: status, progress, counts and row errors',
			parameters: [idParam('Import id'), { name: 'errors', in: 'query', description: 'How many row errors to include (default 200)', schema: { type: 'integer', minimum: 0, maximum: 5000 } }],
			responses: { '200': jsonResponse('The import', importReport), ...errors(400, 401, 403, 404) }
		}
	},
	'/imports/{id}/errors.csv': {
		get: {
			summary: 'The row errors of an import as CSV (row, column, value, message)',
			parameters: [idParam('Import id')],
			responses: { '200': csvResponse('CSV'), ...errors(400, 401, 403, 404) }
		}
	},
	'/parts/export.csv': {
		get: {
			summary: 'The catalogue as CSV (same filters and sort as GET /parts, all pages)',
			description: 'Header: Part JSON names, surfaces flattened as r1Mm, t1Mm, material1, r2Mm, ...; text cells starting with = + - @ tab or CR get a leading \'.',
			responses: { '200': csvResponse('CSV'), ...errors(400, 401) }
		}
	},
	'/stock/export.csv': {
		get: {
			summary: 'Stock by location as CSV',
			parameters: [{ name: 'locationId', in: 'query', schema: { type: 'integer', minimum: 1 } }],
			responses: { '200': csvResponse('CSV'), ...errors(400, 401) }
		}
	},
	'/parts/{id}/datasheets': {
		get: { summary: 'Datasheets and photos of a part', parameters: [idParam('Part id')], responses: { '200': jsonResponse('Datasheets'), ...errors(400, 401) } },
		post: {
			summary: 'Upload a datasheet (PDF, up to 25 MB) or photo (PNG or JPEG, up to 15 MB and 30 megapixels: more gives 413 image-too-large)',
			description: 'The type is read from the magic bytes, not the name; SVG, HTML and others are refused. Photos get a thumbnail. 503 when the file store is down (nothing is saved).',
			parameters: [idParam('Part id')],
			requestBody: multipartFile(),
			responses: { '201': jsonResponse('The datasheet', datasheet), ...errors(400, 401, 403, 404, 413, 415, 503) }
		}
	},
	'/datasheets/{id}': {
		get: {
			summary: 'Download a datasheet (streamed, as an attachment), or view it inline with ?view=inline (browser viewer, sandbox CSP)',
			parameters: [idParam('Datasheet id'), { name: 'view', in: 'query', required: false, schema: { type: 'string', enum: ['inline'] } }],
			responses: { '200': { description: 'The bytes', content: { 'application/octet-stream': { schema: { type: 'string', format: 'binary' } } } }, ...errors(400, 401, 404, 503) }
		},
		delete: { summary: 'Delete a datasheet and its stored file', parameters: [idParam('Datasheet id')], responses: { '204': { description: 'Deleted' }, ...errors(400, 401, 403, 404, 503) } }
	},
	'/datasheets/{id}/thumbnail': {
		get: {
			summary: 'The PNG thumbnail of a photo',
			parameters: [idParam('Datasheet id')],
			responses: { '200': { description: 'PNG', content: { 'image/png': { schema: { type: 'string', format: 'binary' } } } }, ...errors(400, 401, 404, 503) }
		}
	},
	'/stock-takes': {
		post: {
			summary: 'Stock take from a counted CSV (admin, stockroom)',
			description:
				'Columns `locationCode, sku, condition, quantity` (condition may be empty: usable; quantity ≥ 0). The dry run answers each line with booked, counted and difference. ' +
				'The commit writes one `adjust` movement per difference with the reason "stock take" and the count date in the note, all in one transaction (part rows locked, booked figures read again under the locks). ' +
				'Any refused line (unknown location or SKU, archived part, a line given twice, a bad count): 400 `invalid-lines` listing every refused line, nothing written.',
			requestBody: multipartFile({ dryRun: { type: 'boolean', description: 'true: compare only, write nothing' } }, 'The count (CSV, UTF-8)'),
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
			requestBody: jsonBody({ type: 'object', required: ['filenames'], properties: { filenames: { type: 'array', items: { type: 'string' }, maxItems: 500 } } }),
			responses: { '200': jsonResponse('Matches: each file name with its part or null'), ...errors(400, 401, 403, 415) }
		}
	}
};
