import type { CalibratorRow } from '../calibrators';
import type { Measured, PopulationId } from '../types';
import type { CanonicalRow } from './parse';

const numberOrNull = (value: unknown): number | null => (typeof value === 'number' ? value : null);
const textOrNull = (value: unknown): string | null => (typeof value === 'string' ? value : null);

/** Turns stored canonical rows into the calibrator rows the fitting engine prepares. */
export function toCalibratorRows(rows: readonly CanonicalRow[]): CalibratorRow[] {
	return rows.map(({ star, values }) => {
		const mags: Record<string, Measured> = {};
		for (const [field, value] of Object.entries(values)) {
			const band = /^mag_(?!err_)(.+)$/.exec(field)?.[1];
			if (band === undefined || typeof value !== 'number') continue;
			mags[band] = { value, error: numberOrNull(values[`mag_err_${band}`]) ?? 0 };
		}
		return {
			star,
			population: values.population as PopulationId,
			periodDays: values.period_days as number,
			periodErrDays: numberOrNull(values.period_err_days),
			mags,
			parallaxMas: numberOrNull(values.parallax_mas),
			parallaxErrMas: numberOrNull(values.parallax_err_mas),
			parallaxZpCorrectionMas: numberOrNull(values.parallax_zp_correction_mas),
			parallaxZpCorrectionErrMas: numberOrNull(values.parallax_zp_correction_err_mas),
			muHost: numberOrNull(values.mu_host),
			muHostErr: numberOrNull(values.mu_host_err),
			host: textOrNull(values.host),
			ebv: numberOrNull(values.ebv),
			ebvErr: numberOrNull(values.ebv_err),
			feh: numberOrNull(values.feh),
			fehErr: numberOrNull(values.feh_err)
		};
	});
}
