import { problem } from '$lib/server/api/problem';
import { readerOf } from '$lib/server/registry/http';
import { readWorksheetForm, runWorksheet } from '$lib/server/worksheet/worksheet-run';
import { worksheetCsv, worksheetJson } from '$lib/worksheet/export';
import type { RequestHandler } from './$types';

/**
 * The worksheet as a file, for browsers without JavaScript: the posted form is run again (distances,
 * and H0 when a velocity or line is given) and written as JSON or CSV.
 */
export const POST: RequestHandler = async ({ locals, request }) => {
	const data = await request.formData();
	const format = data.get('format') === 'csv' ? 'csv' : 'json';
	const { fields, fileError } = await readWorksheetForm(data);
	if (fileError) return problem(400, fileError);
	const hasVelocity =
		(fields.velocity_mode === 'line' ? fields.observed_wavelength_nm : fields.velocity_km_s).trim() !== '';
	const outcome = await runWorksheet(locals.em, readerOf(locals), fields, hasVelocity);
	if (!outcome.record || Object.keys(outcome.fieldErrors).length > 0) {
		const reasons = [
			...outcome.csvErrors.map((e) => `line ${e.line}, ${e.column || 'row'}: ${e.message}`),
			...Object.entries(outcome.fieldErrors).map(([field, message]) => `${field}: ${message}`)
		];
		return problem(
			400,
			`The worksheet cannot be exported yet: ${reasons.slice(0, 10).join('; ') || 'nothing computed'}.`
		);
	}
	const name = `worksheet-${outcome.record.distances.relation.ref.replace('@', '-v')}`;
	const [body, type] =
		format === 'csv'
			? [worksheetCsv(outcome.record), 'text/csv; charset=utf-8']
			: [worksheetJson(outcome.record), 'application/json'];
	return new Response(body, {
		headers: {
			'content-type': type,
			'content-disposition': `attachment; filename="${name}.${format}"`,
			'cache-control': 'no-store'
		}
	});
};
