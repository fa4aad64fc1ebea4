import { defineEntity, type InferEntity } from '@mikro-orm/core';
import { Group } from './group.entity';
import { RELATION_VISIBILITIES } from './relation.entity';
import { User } from './user.entity';

/** A named collection of calibrator stars, owned by a group; its revisions are immutable snapshots. */
export const CalibratorSet = defineEntity({
	name: 'CalibratorSet',
	tableName: 'app_calibrator_set',
	properties: (p) => ({
		id: p
			.uuid()
			.primary()
			.onCreate(() => crypto.randomUUID()),
		slug: p.string().length(64).unique(),
		title: p.string().length(200),
		description: p.text().default(''),
		group: p.manyToOne(Group).deleteRule('restrict').index(),
		/** `group`: only members of the owning group (and admins) see the set and its revisions. */
		visibility: p.enum([...RELATION_VISIBILITIES]).default('public'),
		/** SPDX licence id of the data, e.g. CC-BY-4.0. */
		licence: p.string().length(64),
		/** Citations users of the data must give, as plain text. */
		citations: p.json<string[]>().default('[]'),
		createdBy: p.manyToOne(User).deleteRule('restrict'),
		createdAt: p.datetime().onCreate(() => new Date())
	})
});

export type CalibratorSetEntity = InferEntity<typeof CalibratorSet>;
