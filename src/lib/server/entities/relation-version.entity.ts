import { defineEntity, type InferEntity } from '@mikro-orm/core';
import { Relation } from './relation.entity';

/**
 * The frozen content of an approved version. Insert-only: a PostgreSQL trigger refuses UPDATE, DELETE
 * and TRUNCATE for every role, the table's owner included. What may change about a version (current,
 * superseded, deprecated, embargo) lives in VersionLifecycle.
 */
export const RelationVersion = defineEntity({
	name: 'RelationVersion',
	tableName: 'app_relation_version',
	uniques: [{ properties: ['relation', 'number'] }],
	// Versions fitted from a calibrator revision, found by what their frozen content names (Migration20261206000500).
	indexes: [
		{
			name: 'app_relation_version_calibrator_revision_index',
			expression:
				'create index "app_relation_version_calibrator_revision_index" on "app_relation_version" (("content"->\'calibrator_set\'->>\'slug\'), (cast("content"->\'calibrator_set\'->>\'revision\' as int)))'
		}
	],
	properties: (p) => ({
		id: p
			.uuid()
			.primary()
			.onCreate(() => crypto.randomUUID()),
		relation: p.manyToOne(Relation).deleteRule('restrict').updateRule('restrict'),
		number: p.integer(),
		digest: p.string().length(71).unique(),
		/** RelationVersionContent with its digest, exactly as served. */
		content: p.json<Record<string, unknown>>(),
		/** The proposal that became this version (kept as a plain id: the record outlives workflow rows). */
		proposalId: p.uuid().nullable(),
		createdAt: p.datetime().onCreate(() => new Date())
	})
});

export type RelationVersionEntity = InferEntity<typeof RelationVersion>;
