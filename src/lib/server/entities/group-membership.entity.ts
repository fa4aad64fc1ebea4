import { defineEntity, type InferEntity } from '@mikro-orm/core';
import { Group } from './group.entity';
import { User } from './user.entity';

export const GROUP_STANDINGS = ['member', 'manager'] as const;
/** A manager is also a member, and may add and remove members. */
export type GroupStanding = (typeof GROUP_STANDINGS)[number];

export const GroupMembership = defineEntity({
	name: 'GroupMembership',
	tableName: 'app_group_membership',
	uniques: [{ properties: ['group', 'user'] }],
	properties: (p) => ({
		id: p
			.uuid()
			.primary()
			.onCreate(() => crypto.randomUUID()),
		group: p.manyToOne(Group).deleteRule('cascade'),
		user: p.manyToOne(User).deleteRule('cascade').index(),
		standing: p.enum([...GROUP_STANDINGS]).default('member'),
		createdAt: p.datetime().onCreate(() => new Date())
	})
});

export type GroupMembershipEntity = InferEntity<typeof GroupMembership>;
