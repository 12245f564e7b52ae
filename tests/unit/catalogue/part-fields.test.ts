/**
 * The part field descriptor (`$lib/catalogue/part-fields`) is the one list of a part's fields. Each
 * place that lists them is read here and must hold exactly the descriptor's fields, with its types,
 * units, labels, defaults and editors: the input schema, the form reader and the rendered part form,
 * the parts row (`columnsOf` / `toInput`), the CSV import mapping and export header, Part JSON and the
 * API description. A field added to one place only fails one of these.
 */
import { describe, expect, it } from 'vitest';
import { z } from 'zod';
import { render } from 'svelte/server';
import { getTableColumns } from 'drizzle-orm';
import {
	formLabel,
	mappingLabel,
	MAX_SURFACES,
	PART_FIELD_NAMES,
	PART_FIELDS,
	PART_KINDS,
	partFieldsEditableBy,
	SCALAR_PART_FIELDS,
	surfaceColumns,
	unitSuffix
} from '$lib/catalogue/part-fields';
import { PART_PATCHERS, PURCHASING_FIELDS_ONLY, ROLES } from '$lib/roles';
import { partFieldsSchema, partInputSchema, partPatchSchema, PURCHASING_FIELDS } from '$lib/server/catalogue/part-input';
import { assertPatchAllowed, columnsOf, PART_COLUMNS, toInput, type PartRecord } from '$lib/server/catalogue/parts';
import { toPartJson } from '$lib/server/catalogue/part-json';
import { readPartForm } from '$lib/server/catalogue/forms';
import { fieldLabel, IMPORT_FIELDS, isLengthField, isNumericField, SCALAR_FIELDS, suggestField } from '$lib/server/imports/fields';
import { partsHeader } from '$lib/server/imports/export';
import { openApiDocument } from '$lib/server/api/openapi';
import { partJson } from '$lib/server/api/openapi/catalogue';
import { parts } from '$lib/server/db/schema';
import PartForm from '$lib/components/PartForm.svelte';

const NAMES = [...PART_FIELD_NAMES];
const SCALARS = SCALAR_PART_FIELDS.map((f) => f.name);
const sorted = (xs: Iterable<string>) => [...xs].sort();

/** A valid part with every field given. */
const FULL = {
	sku: 'TW-T1',
	name: 'Test lens',
	kind: 'biconvex',
	diameterMm: 25.4,
	clearApertureMm: 22,
	surfaces: [{ radiusMm: 100, thicknessMm: 4, material: '517642' }, { radiusMm: -100 }],
	eflMm: 98,
	bflMm: 96,
	centerThicknessMm: 4,
	designWavelengthNm: 587.6,
	coating: 'AR 400–700 nm',
	supplier: 'Tarnwell Optics Supply',
	supplierPartNumber: 'TOS-1',
	unitPrice: 38.5,
	currency: 'EUR',
	leadTimeDays: 14,
	reorderPoint: 2,
	reorderQuantity: 5,
	notes: 'invented test part'
} as const;

describe('the part field descriptor', () => {
	it('names each field once, with a label, an editor set and CSV header words no other field claims', () => {
		expect(new Set(NAMES).size).toBe(NAMES.length);
		expect(sorted(Object.keys(FULL))).toEqual(sorted(NAMES));
		const owner = new Map<string, string>();
		for (const f of PART_FIELDS) {
			expect(f.label.length, f.name).toBeGreaterThan(0);
			expect(f.editors.length, f.name).toBeGreaterThan(0);
			for (const h of f.headers ?? []) {
				expect(owner.get(h), `header word ${h}`).toBeUndefined();
				owner.set(h, f.name);
			}
		}
	});

	it('is the input schema: the same keys, defaults, empty values and text lengths', () => {
		expect(Object.keys(partFieldsSchema.shape)).toEqual(NAMES);
		expect(Object.keys(partPatchSchema.shape)).toEqual(NAMES);
		expect(partInputSchema.safeParse(FULL).success).toBe(true);
		for (const f of PART_FIELDS) {
			const without: Record<string, unknown> = { ...FULL };
			delete without[f.name];
			if (f.name === 'eflMm') without.surfaces = FULL.surfaces; // a part with surfaces needs no datasheet EFL
			const parsed = partInputSchema.safeParse(without);
			if (f.required) expect(parsed.success, `${f.name} is required`).toBe(false);
			else {
				expect(parsed.success, `${f.name} may be left out`).toBe(true);
				expect((parsed.data as Record<string, unknown>)[f.name], `${f.name} default`).toEqual(f.default);
			}
			expect(partPatchSchema.safeParse({ [f.name]: null }).success, `${f.name} may be null`).toBe(!!f.optional);
			if (f.maxLength) {
				expect(partPatchSchema.safeParse({ [f.name]: 'A'.repeat(f.maxLength + 1) }).success, `${f.name} longer than ${f.maxLength}`).toBe(false);
			}
		}
		expect(partPatchSchema.safeParse({ surfaces: Array.from({ length: MAX_SURFACES + 1 }, () => ({ radiusMm: null })) }).success).toBe(false);
	});

	it('says who may edit each field: the PATCH rule and the purchasing fields follow it', () => {
		expect(sorted(new Set(PART_FIELDS.flatMap((f) => f.editors)))).toEqual(sorted(PART_PATCHERS));
		for (const role of PURCHASING_FIELDS_ONLY) expect(partFieldsEditableBy(role)).toEqual([...PURCHASING_FIELDS]);
		for (const role of ROLES) {
			const mine = partFieldsEditableBy(role);
			for (const name of NAMES) {
				const patch = partPatchSchema.parse({ [name]: (FULL as Record<string, unknown>)[name] });
				const allowed = (() => {
					try {
						assertPatchAllowed(role, patch);
						return true;
					} catch {
						return false;
					}
				})();
				expect(allowed, `${role} may change ${name}`).toBe(mine.includes(name));
			}
		}
	});

	it('is the form reader and the rendered part form: one input per field, labelled with its unit', () => {
		const form = new FormData();
		for (const f of SCALAR_PART_FIELDS) form.set(f.name, String((FULL as Record<string, unknown>)[f.name]));
		form.set('surfaceCount', '2');
		form.set('surfaces.0.radiusMm', '100');
		form.set('surfaces.0.thicknessMm', '4');
		form.set('surfaces.0.material', '517642');
		form.set('surfaces.1.radiusMm', '-100');
		expect(partInputSchema.parse(readPartForm(form))).toEqual(partInputSchema.parse(FULL));

		const html = render(PartForm, { props: { values: {}, kinds: PART_KINDS, materials: [], submitLabel: 'Save' } }).body;
		const named = new Set([...html.matchAll(/<(?:input|select|textarea)\b[^>]*\bname="([^"]+)"/g)].map((m) => m[1]));
		expect(sorted([...named].filter((n) => !n.startsWith('surfaces.') && n !== 'surfaceCount'))).toEqual(sorted(SCALARS));
		for (const f of SCALAR_PART_FIELDS) {
			if (f.shownWith) {
				expect(html, f.name).toContain(`aria-label="${f.label}" name="${f.name}"`);
				continue;
			}
			const label = new RegExp(`<label class="field-label" for="${f.name}">([\\s\\S]*?)</label>`).exec(html)?.[1] ?? '';
			const text = label.replace(/<[^>]+>/g, '').replace(/\s+/g, ' ').trim();
			expect(text, f.name).toBe(f.unit === 'currency' ? `${f.label} (currency units, e.g. 38.50)` : formLabel(f));
		}
		expect(unitSuffix('mm')).toBe(' (mm)');
	});

	it('is the parts row: columnsOf writes, and toInput reads back, every field', () => {
		const input = partInputSchema.parse(FULL);
		const cols = columnsOf(input, 7);
		expect(sorted(Object.keys(cols))).toEqual(sorted(PART_COLUMNS));
		const table = Object.keys(getTableColumns(parts));
		for (const c of PART_COLUMNS) expect(table, c).toContain(c);
		const record = {
			part: { ...cols, id: 1, paraxialEflMm: 98, eflSource: 'prescription', archivedAt: null, createdAt: new Date(0), updatedAt: new Date(0) },
			surfaces: [
				{ id: 2, partId: 1, position: 1, radiusMm: -100, thicknessMm: null, materialCode: null },
				{ id: 1, partId: 1, position: 0, radiusMm: 100, thicknessMm: 4, materialCode: '517642' }
			],
			supplierName: FULL.supplier,
			latestMeasurement: null
		} as unknown as PartRecord;
		const back = toInput(record);
		expect(sorted(Object.keys(back))).toEqual(sorted(NAMES));
		expect(partInputSchema.parse(back)).toEqual(input);
		// Part JSON carries the same fields with the same values.
		const json = toPartJson(record.part, {
			surfaces: record.surfaces,
			supplierName: record.supplierName,
			totals: { onHand: 0, reserved: 0, available: 0, quarantine: 0, damaged: 0 },
			measured: null,
			defaultWavelengthNm: 587.6
		}) as unknown as Record<string, unknown>;
		for (const name of NAMES) expect(json[name], name).toEqual((back as Record<string, unknown>)[name]);
	});

	it('is the CSV: the export header, the import fields, their types, units, labels and header words', () => {
		expect([...SCALAR_FIELDS]).toEqual(SCALARS);
		const surfaceCols = (n: number) => Array.from({ length: n }, (_, i) => surfaceColumns(i + 1)).flat();
		expect(partsHeader(3)).toEqual(['id', ...SCALARS, ...surfaceCols(3), 'onHand', 'available']);
		expect([...IMPORT_FIELDS]).toEqual([...SCALARS, ...surfaceCols(MAX_SURFACES)]);
		for (const f of SCALAR_PART_FIELDS) {
			expect(isNumericField(f.name), f.name).toBe(f.type === 'number' || f.type === 'integer');
			expect(isLengthField(f.name), f.name).toBe(f.unit === 'mm');
			expect(fieldLabel(f.name)).toBe(mappingLabel(f));
			expect(suggestField(f.name)).toBe(f.name);
			for (const h of f.headers ?? []) expect(suggestField(h), h).toBe(f.name);
		}
	});

	it('is the API description: Part JSON and the request bodies document exactly these fields', () => {
		const OUTPUT_ONLY = ['id', 'onHand', 'available', 'coatingBandNm', 'measured', 'computed', 'archived', 'updatedAt'];
		expect(Object.keys(partJson.shape).filter((k) => !OUTPUT_ONLY.includes(k))).toEqual(NAMES);
		const doc = openApiDocument() as { paths: Record<string, Record<string, { requestBody?: { content: Record<string, { schema: { properties: object } }> } }>> };
		const bodyOf = (path: string, method: string) => Object.keys(doc.paths[path][method].requestBody!.content['application/json'].schema.properties);
		expect(bodyOf('/parts', 'post')).toEqual(NAMES);
		expect(bodyOf('/parts/{id}', 'patch')).toEqual(NAMES);
		const kind = z.toJSONSchema((partJson.shape as Record<string, z.ZodType>).kind) as { enum: string[] };
		expect(kind.enum).toEqual([...PART_KINDS]);
		expect(parts.kind.enumValues).toEqual([...PART_KINDS]);
	});
});
