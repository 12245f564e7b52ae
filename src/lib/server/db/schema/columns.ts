import { bigint } from 'drizzle-orm/mysql-core';

/** Auto-increment primary key (not `serial()`: MariaDB rejects the `serial AUTO_INCREMENT` it emits). */
export const id = () => bigint('id', { mode: 'number', unsigned: true }).autoincrement().primaryKey();

/** A column holding another table's id. */
export const ref = (name: string) => bigint(name, { mode: 'number', unsigned: true });
