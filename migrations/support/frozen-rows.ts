import type { Migration } from '@mikro-orm/migrations';

/**
 * Kept out of the migrations folder's top level, which the migrator reads as migrations.
 *
 * A down migration that drops a frozen table (approved versions, calibrator revisions, the record of
 * where revision values came from) first makes sure the table holds no rows, and otherwise refuses:
 * undoing a migration must never be the way approved content disappears.
 */
export async function refuseToDropFrozenRows(migration: Migration, tables: string[]): Promise<void> {
	const held: string[] = [];
	for (const table of tables) {
		const [{ present }] = await migration.execute(`select to_regclass(?) is not null as present`, [table]);
		if (!present) continue;
		const [{ count }] = await migration.execute(`select count(*)::int as count from "${table}"`);
		if (count > 0) held.push(`${table} holds ${count} frozen row${count === 1 ? '' : 's'}`);
	}
	if (held.length === 0) return;
	throw new Error(
		`${migration.constructor.name} cannot be undone: ${held.join(', ')}. Approved content never changes, ` +
			'and undoing this migration would drop it. Restore a backup, or start from an empty database instead.'
	);
}
