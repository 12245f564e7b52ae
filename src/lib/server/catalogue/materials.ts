/** Materials and suppliers: the lists the part form and the filters offer. */
import { asc } from 'drizzle-orm';
import type { DbOrTx } from '$lib/server/db';
import { materials, suppliers } from '$lib/server/db/schema';

/** Materials known to the lab (code, name, nd, vd), by code. */
export async function listMaterials(db: DbOrTx) {
	return db.select({ code: materials.code, name: materials.name, nd: materials.nd, vd: materials.vd }).from(materials).orderBy(asc(materials.code));
}

/** Suppliers by name. */
export async function listSuppliers(db: DbOrTx) {
	return db.select({ id: suppliers.id, name: suppliers.name }).from(suppliers).orderBy(asc(suppliers.name));
}
