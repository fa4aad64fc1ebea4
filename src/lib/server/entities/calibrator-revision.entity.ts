import { defineEntity, type InferEntity } from '@mikro-orm/core';
import { CalibratorSet } from './calibrator-set.entity';
import { User } from './user.entity';

/**
 * One uploaded revision of a calibrator set. Insert-only (a trigger refuses UPDATE and DELETE):
 * `content` is the sealed canonical content the engine digests, and the original file lives in object
 * storage under `sourceKey`.
 */
export const CalibratorRevision = defineEntity({
	name: 'CalibratorRevision',
	tableName: 'app_calibrator_revision',
	uniques: [{ properties: ['calibratorSet', 'number'] }],
	// The star search's GIN index over lower-cased star names and cross ids (Migration20261206000500).
	indexes: [
		{
			name: 'app_calibrator_revision_star_keys_index',
			expression:
				'create index "app_calibrator_revision_star_keys_index" on "app_calibrator_revision" using gin (app_calibrator_star_keys("content"))'
		}
	],
	properties: (p) => ({
		id: p
			.uuid()
			.primary()
			.onCreate(() => crypto.randomUUID()),
		calibratorSet: p.manyToOne(CalibratorSet).deleteRule('restrict'),
		number: p.integer(),
		/** `sha256:<hex>` of the canonical content (calibrator_set, revision, source file, columns, rows). */
		digest: p.string().length(71),
		/** Lowercase hex sha256 of the stored original file. */
		sourceSha256: p.string().length(64),
		sourceKey: p.string().length(300),
		sourceName: p.string().length(200),
		sourceMediaType: p.string().length(100),
		sourceBytes: p.integer(),
		rowCount: p.integer(),
		/** CalibratorRevisionContent with its digest, exactly as served. */
		content: p.json<Record<string, unknown>>(),
		note: p.text().default(''),
		uploadedBy: p.manyToOne(User).deleteRule('restrict'),
		createdAt: p.datetime().onCreate(() => new Date())
	})
});

export type CalibratorRevisionEntity = InferEntity<typeof CalibratorRevision>;
