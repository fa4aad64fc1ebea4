/**
 * Cautions a curator should read before proposing a fit: populations mixed in one fit, a requested
 * period range wider than the calibrators cover (the relation is valid only where stars are), and a
 * small sample. Common practice in the field; the thresholds are stated beside each check.
 */
export interface FitCautionInput {
	nUsed: number;
	nTotal: number;
	validity: { log_period_min: number; log_period_max: number };
	warnings: { code: string; message: string }[];
	excluded: { code: string }[];
	requested: { logPeriodMin: number | null; logPeriodMax: number | null; fundamentalise: boolean };
}

export interface FitCaution {
	code: 'mixed_populations' | 'period_range_beyond_calibrators' | 'small_sample' | 'errors_too_small' | 'engine';
	message: string;
}

/** Below this many stars a slope is poorly constrained (common practice: fix the slope instead). */
export const SMALL_SAMPLE = 10;

export function fitCautions(input: FitCautionInput): FitCaution[] {
	const cautions: FitCaution[] = [];
	const fmt = (value: number) => value.toFixed(3);
	const mixed = input.warnings.find((warning) => warning.code === 'mixed_populations');
	if (mixed) {
		cautions.push({ code: 'mixed_populations', message: `Populations are mixed: ${mixed.message}.` });
	} else if (input.requested.fundamentalise) {
		cautions.push({
			code: 'mixed_populations',
			message: 'First-overtone periods are fundamentalised and fitted with fundamental-mode stars.'
		});
	}
	const { log_period_min: low, log_period_max: high } = input.validity;
	const { logPeriodMin, logPeriodMax } = input.requested;
	if ((logPeriodMin !== null && logPeriodMin < low) || (logPeriodMax !== null && logPeriodMax > high)) {
		cautions.push({
			code: 'period_range_beyond_calibrators',
			message: `The period range asked for (log P ${logPeriodMin ?? '…'} to ${logPeriodMax ?? '…'}) is wider than the calibrators cover (${fmt(low)} to ${fmt(high)}): the relation is valid only over ${fmt(low)}–${fmt(high)}, and applying it beyond is an extrapolation.`
		});
	}
	if (input.nUsed < SMALL_SAMPLE) {
		cautions.push({
			code: 'small_sample',
			message: `Only ${input.nUsed} stars enter the fit: the slope is poorly constrained; consider a fixed slope.`
		});
	}
	for (const warning of input.warnings) {
		if (warning.code === 'mixed_populations') continue;
		// χ²/dof beyond 1 + 3·√(2/dof): the error bars a version would serve rest on errors that are too small.
		cautions.push({
			code: warning.code === 'errors_too_small' ? 'errors_too_small' : 'engine',
			message: warning.message
		});
	}
	return cautions;
}
