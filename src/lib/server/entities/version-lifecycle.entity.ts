import { defineEntity, type InferEntity } from '@mikro-orm/core';
import { Relation } from './relation.entity';
import { User } from './user.entity';

export const VERSION_STATUSES = ['current', 'superseded', 'deprecated'] as const;
export type VersionStatus = (typeof VERSION_STATUSES)[number];

/** The mutable side of a frozen version: its standing, deprecation and embargo. */
export const VersionLifecycle = defineEntity({
	name: 'VersionLifecycle',
	tableName: 'app_version_lifecycle',
	uniques: [{ properties: ['relation', 'number'] }],
	properties: (p) => ({
		/** The id of the RelationVersion it describes. */
		id: p.uuid().primary(),
		relation: p.manyToOne(Relation).deleteRule('restrict'),
		number: p.integer(),
		status: p.enum([...VERSION_STATUSES]),
		deprecatedAt: p.datetime().nullable(),
		deprecatedBy: p.manyToOne(User).deleteRule('set null').nullable(),
		deprecationReason: p.text().nullable(),
		/** The version number users should move to. */
		successorNumber: p.integer().nullable(),
		/** Visible only to the owning group until this moment (public relations only). */
		embargoUntil: p.datetime().nullable(),
		releasedAt: p.datetime().nullable(),
		releasedBy: p.manyToOne(User).deleteRule('set null').nullable(),
		updatedAt: p
			.datetime()
			.onCreate(() => new Date())
			.onUpdate(() => new Date())
	})
});

export type VersionLifecycleEntity = InferEntity<typeof VersionLifecycle>;
