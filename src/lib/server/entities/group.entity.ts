import { defineEntity, type InferEntity } from '@mikro-orm/core';

/** A research group: it owns relations and calibrator sets; its members see its private content. */
export const Group = defineEntity({
	name: 'Group',
	tableName: 'app_group',
	properties: (p) => ({
		id: p
			.uuid()
			.primary()
			.onCreate(() => crypto.randomUUID()),
		slug: p.string().length(64).unique(),
		name: p.string().length(200),
		description: p.text().nullable(),
		createdAt: p.datetime().onCreate(() => new Date())
	})
});

export type GroupEntity = InferEntity<typeof Group>;
