import Papa from 'papaparse';
import { neutraliseFormula } from '../calibration/calibrator-table/export';
import type { DistanceResponse } from '../server/api/distances';
import type { HubbleResponse } from '../server/api/hubble';
import type { HostStar } from './host-csv';
import type { DistanceRequestBody } from './worksheet-fields';

/**
 * A finished worksheet as files: JSON with every input and result, and CSV with one row per star
 * under `#` lines that record the relation's ref and digest, the settings and the combined results
 * (the worksheet reads such a file back: its CSV reader skips `#` lines).
 */
export interface WorksheetRecord {
	distanceRequest: DistanceRequestBody;
	distances: DistanceResponse;
	hubbleRequest: Record<string, unknown> | null;
	hubble: HubbleResponse | null;
}

export const WORKSHEET_FORMAT = 'candlebook-worksheet/1';

export function worksheetJson(record: WorksheetRecord, exportedAt: Date = new Date()): string {
	return JSON.stringify(
		{
			format: WORKSHEET_FORMAT,
			exported_at: exportedAt.toISOString(),
			relation: { ref: record.distances.relation.ref, digest: record.distances.relation.digest },
			inputs: { distances: record.distanceRequest, hubble: record.hubbleRequest },
			distances: record.distances,
			hubble: record.hubble
		},
		null,
		2
	);
}

const cell = (value: unknown) => (value === null || value === undefined ? '' : value);

export function worksheetCsv(record: WorksheetRecord, exportedAt: Date = new Date()): string {
	const { distances, hubble, distanceRequest, hubbleRequest } = record;
	const c = distances.combined;
	const lines: [string, unknown][] = [
		['format', WORKSHEET_FORMAT],
		['exported_at', exportedAt.toISOString()],
		['relation', distances.relation.ref],
		['relation_digest', distances.relation.digest],
		['relation_status', distances.relation.status],
		['band', distances.relation.band],
		['extinction_law', distances.settings.extinction_law],
		['r_v', distances.settings.r_v],
		['clip_sigma', distances.settings.clip_sigma],
		['foreground_ebv_err', distances.settings.foreground_ebv_err],
		['host_metallicity', distances.settings.host_metallicity && JSON.stringify(distances.settings.host_metallicity)],
		['adopted_slope_err', distances.settings.adopted_slope_err],
		[
			'crowding_correction',
			distances.settings.crowding_correction && JSON.stringify(distances.settings.crowding_correction)
		],
		['mu0', c.mu0],
		['mu0_err_stat', c.mu0_err_stat],
		['mu0_err_sys', c.mu0_err_sys],
		...c.error_budget.map((term): [string, unknown] => [`mu0_sys_${term.id}`, `${term.value} (${term.label})`]),
		['distance_mpc', c.distance_mpc],
		['distance_mpc_err', c.distance_mpc_err],
		['distance_mpc_p16', c.distance_mpc_p16],
		['distance_mpc_p84', c.distance_mpc_p84],
		['distance_convention', distances.distance_convention],
		['n_used', c.n_used],
		['n_assumed_metallicity', c.n_assumed_metallicity],
		['rejected', c.rejected.map((r) => r.id).join(' ')],
		...Object.entries(hubbleRequest ?? {}).map(([key, value]): [string, unknown] => [`hubble_input_${key}`, value]),
		...(hubble
			? ([
					['z', hubble.z],
					['velocity_km_s', hubble.velocity_km_s],
					['velocity_km_s_err', hubble.velocity_km_s_err],
					['velocity_frame', hubble.velocity_frame],
					['h0', hubble.h0],
					['h0_err', hubble.h0_err],
					['h0_err_stat', hubble.h0_err_stat],
					['h0_err_sys', hubble.h0_err_sys],
					['h0_budget_distance', hubble.error_budget.distance],
					['h0_budget_distance_statistical', hubble.error_budget.distance_statistical],
					['h0_budget_distance_systematic', hubble.error_budget.distance_systematic],
					['h0_budget_velocity', hubble.error_budget.velocity],
					['h0_budget_peculiar_velocity', hubble.error_budget.peculiar_velocity],
					...hubble.cautions.map((caution): [string, unknown] => [`caution_${caution.code}`, caution.message])
				] as [string, unknown][])
			: [])
	];
	const head = lines.map(([key, value]) => `# ${key}: ${String(cell(value)).replace(/[\r\n]+/g, ' ')}`).join('\n');
	const resultsById = new Map(distances.results.map((result) => [result.id, result]));
	const rows = distanceRequest.stars.map((star: HostStar) => {
		const result = resultsById.get(star.id);
		return [
			neutraliseFormula(star.id),
			star.period_days,
			star.mean_mag,
			star.mean_mag_err,
			cell(star.ebv),
			cell(star.ebv_err),
			cell(star.feh),
			cell(star.feh_err),
			cell(star.population),
			cell(star.magnitude_system),
			cell(star.wesenheit_ratio),
			cell(result?.abs_mag),
			cell(result?.abs_mag_err),
			cell(result?.mu0),
			cell(result?.mu0_err),
			cell(result?.distance_mpc),
			cell(result?.distance_mpc_err),
			cell(result?.distance_mpc_p16),
			cell(result?.distance_mpc_p84),
			result?.rejected ? 'yes' : 'no',
			neutraliseFormula((result?.warnings ?? []).map((warning) => warning.code).join(' '))
		];
	});
	const table = Papa.unparse({
		fields: [
			'id',
			'period_days',
			'mean_mag',
			'mean_mag_err',
			'ebv',
			'ebv_err',
			'feh',
			'feh_err',
			'population',
			'magnitude_system',
			'wesenheit_ratio',
			'abs_mag',
			'abs_mag_err',
			'mu0',
			'mu0_err',
			'distance_mpc',
			'distance_mpc_err',
			'distance_mpc_p16',
			'distance_mpc_p84',
			'rejected',
			'warnings'
		],
		data: rows
	});
	return `${head}\n${table}\n`;
}
