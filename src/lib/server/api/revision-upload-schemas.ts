import { z } from 'zod';
import { LIGHT_CURVE_FILLS } from '../../calibration/index';
import { StoredLightCurveResultSchema } from './light-curve-schemas';
import { describeOperation, registerApiSchema } from './schema-registry';

/** The revision upload: a raw CSV or TSV body, options in the query, and what the upload made. */
export const REVISION_UPLOAD_OPERATION = 'POST /api/v1/calibrator-sets/{slug}/revisions';
/** The light-curve analyses a revision took values from, readable by whoever may read the revision. */
export const REVISION_ANALYSES_OPERATION = 'GET /api/v1/calibrator-sets/{slug}/revisions/{n}/light-curves';

const digest = z.string().regex(/^sha256:[0-9a-f]{64}$/);

export const RevisionUploadedSchema = registerApiSchema(
	z.object({
		calibrator_set: z.string(),
		revision: z.number().int().positive(),
		digest,
		source_sha256: z.string(),
		source_file: z.object({ name: z.string(), media_type: z.string(), bytes: z.number().int() }),
		rows: z.number().int(),
		note: z.string(),
		created_at: z.string(),
		light_curves: z
			.object({
				upload: z.uuid(),
				fill: z.enum(LIGHT_CURVE_FILLS),
				values_taken: z.number().int().describe('Values written from analyses (each listed in value_sources)'),
				notices: z.array(z.object({ star: z.string(), band: z.string().nullable(), reason: z.string() }))
			})
			.nullable()
			.describe('What became of the light-curve analyses asked for with light_curves; null when none were')
	}),
	{
		id: 'CalibratorRevisionUploaded',
		description:
			'A stored revision. Its rows, and the source of every value taken from a light curve, are in GET …/revisions/{n}.',
		responseFor: [REVISION_UPLOAD_OPERATION]
	}
);

const problem = (description: string) => ({
	description,
	mediaTypes: ['application/problem+json'],
	schema: 'Problem'
});

describeOperation(REVISION_UPLOAD_OPERATION, {
	description:
		'The body is the table itself (text/csv or text/tab-separated-values), checked completely before anything is stored. With light_curves, periods (with errors, from the most precise band) and intensity-mean magnitudes per band come from a finished light-curve upload of yours; rows are matched by star, then cross_id; period_days may then be empty or absent for the rows it fills. The revision records which analysis gave each value (value_sources), and an analysis a revision relies on can never change or be deleted.',
	parameters: [
		{
			name: 'mapping',
			in: 'query',
			description: 'JSON: header → {field, unit} for non-canonical headers, or {field: null} to ignore a column',
			schema: { type: 'string' }
		},
		{ name: 'name', in: 'query', description: "The file's name", schema: { type: 'string', maxLength: 200 } },
		{ name: 'note', in: 'query', description: 'What changed and why', schema: { type: 'string', maxLength: 2000 } },
		{
			name: 'non_positive_parallax',
			in: 'query',
			description: 'keep: keep zero and negative parallaxes (for parallax-space fits)',
			schema: { type: 'string', enum: ['keep'] }
		},
		{
			name: 'light_curves',
			in: 'query',
			description: 'Id of one of your light-curve uploads whose analyses fill periods and mean magnitudes',
			schema: { type: 'string', format: 'uuid' }
		},
		{
			name: 'light_curve_fill',
			in: 'query',
			description: 'blank: fill only empty cells (default); all: the analyses replace the table’s values too',
			schema: { type: 'string', enum: [...LIGHT_CURVE_FILLS], default: 'blank' }
		}
	],
	responses: {
		'201': { description: 'Stored', schema: 'CalibratorRevisionUploaded' },
		'404': problem('No such set, or no such light-curve upload of yours'),
		'409': problem('The light-curve upload is still being analysed, or its analysis failed'),
		'413': problem('The body is larger than the upload limit'),
		'415': problem('The body is not CSV or TSV'),
		'422': problem('The table has problems, listed by line, column, value and reason in issues; nothing was stored')
	}
});

export const RevisionLightCurvesSchema = registerApiSchema(
	z.object({
		calibrator_set: z.string(),
		revision: z.number().int().positive(),
		digest,
		analyses: z.array(
			StoredLightCurveResultSchema.extend({
				fields: z.array(z.string()).describe('Columns of the revision whose values came from this analysis'),
				upload: z.object({
					id: z.uuid(),
					source: z.object({ sha256: z.string(), name: z.string(), media_type: z.string(), bytes: z.number().int() }),
					time_reference: z.string(),
					time_offset_days: z.number()
				})
			})
		)
	}),
	{
		id: 'RevisionLightCurves',
		description:
			"The light-curve analyses a revision's value_sources name, in full, with the raw file's digest: empty for a revision that took no values from light curves.",
		responseFor: [REVISION_ANALYSES_OPERATION]
	}
);

describeOperation(REVISION_ANALYSES_OPERATION, {
	description:
		"Lets a reader of a revision follow each value_sources entry to its analysis (period search, Fourier model, means, warnings) even though the light-curve upload itself is private to its uploader. Analyses never change, so public sets' answers are cacheable for a year.",
	responses: { '404': problem('No such set or revision, or a private set the caller may not see') }
});
