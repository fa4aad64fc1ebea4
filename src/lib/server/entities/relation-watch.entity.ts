import { defineEntity, type InferEntity } from '@mikro-orm/core';
import { Relation } from './relation.entity';
import { User } from './user.entity';

/** A person who is mailed when a relation gets a new version or one is deprecated. */
export const RelationWatch = defineEntity({
	name: 'RelationWatch',
	tableName: 'app_relation_watch',
	uniques: [{ properties: ['relation', 'user'] }],
	properties: (p) => ({
		id: p
			.uuid()
			.primary()
			.onCreate(() => crypto.randomUUID()),
		relation: p.manyToOne(Relation).deleteRule('cascade'),
		user: p.manyToOne(User).deleteRule('cascade').index(),
		createdAt: p.datetime().onCreate(() => new Date())
	})
});

export type RelationWatchEntity = InferEntity<typeof RelationWatch>;
