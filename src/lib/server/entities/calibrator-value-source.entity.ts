import { defineEntity, type InferEntity } from '@mikro-orm/core';
import { CalibratorRevision } from './calibrator-revision.entity';
import { LightCurveResult } from './light-curve-result.entity';

/**
 * Which light-curve analysis gave a value of a calibrator revision: the database's own copy of the
 * revision's `value_sources`, so an analysis a revision relies on cannot be deleted (the foreign key
 * restricts) and a star's revisions can be found from its analyses. Insert-only, like the revision.
 */
export const CalibratorValueSource = defineEntity({
	name: 'CalibratorValueSource',
	tableName: 'app_calibrator_value_source',
	uniques: [{ properties: ['revision', 'star', 'field'] }],
	properties: (p) => ({
		id: p
			.uuid()
			.primary()
			.onCreate(() => crypto.randomUUID()),
		revision: p.manyToOne(CalibratorRevision).deleteRule('restrict'),
		star: p.text(),
		field: p.string().length(60),
		value: p.double().runtimeType('number'),
		lightCurveResult: p.manyToOne(LightCurveResult).deleteRule('restrict').index(),
		quantity: p.string().length(40)
	})
});

export type CalibratorValueSourceEntity = InferEntity<typeof CalibratorValueSource>;
