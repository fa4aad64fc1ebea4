import { defineEntity, type InferEntity } from '@mikro-orm/core';
import { POPULATION_IDS } from '../../calibration/types';
import { Group } from './group.entity';
import { User } from './user.entity';

export const ANCHOR_TYPES = ['parallax', 'geometric_host', 'cluster'] as const;
export type AnchorType = (typeof ANCHOR_TYPES)[number];

export const RELATION_VISIBILITIES = ['public', 'group'] as const;
export type RelationVisibility = (typeof RELATION_VISIBILITIES)[number];

/**
 * A period–luminosity relation in one band and population. Its approved versions are frozen in
 * RelationVersion; approvals lock this row so that two approvals never both become version N+1.
 */
export const Relation = defineEntity({
	name: 'Relation',
	tableName: 'app_relation',
	properties: (p) => ({
		id: p
			.uuid()
			.primary()
			.onCreate(() => crypto.randomUUID()),
		slug: p.string().length(64).unique(),
		title: p.string().length(200),
		description: p.text().default(''),
		band: p.string().length(16),
		population: p.enum([...POPULATION_IDS]),
		magnitudeSystem: p.enum(['Vega', 'AB']),
		anchorType: p.enum([...ANCHOR_TYPES]),
		group: p.manyToOne(Group).deleteRule('restrict').index(),
		visibility: p.enum([...RELATION_VISIBILITIES]).default('public'),
		requiredApprovals: p.integer().default(1),
		createdBy: p.manyToOne(User).deleteRule('restrict'),
		createdAt: p.datetime().onCreate(() => new Date())
	})
});

export type RelationEntity = InferEntity<typeof Relation>;
