/**
 * False-alarm probability of the highest peak of a generalised Lomb–Scargle periodogram (standard
 * normalisation, floating mean), by Baluev's upper bound (Baluev 2008, MNRAS 385, 1279, §3 and eq. 5–6):
 *
 *   FAP(p) ≈ 1 − (1 − FAP₁(p))·e^{−τ(p)},   FAP₁(p) = (1 − p)^{(N−3)/2},
 *   τ(p) = γ · W · (1 − p)^{(N−4)/2} · √(N_H·p/2),   γ = √(2/N_H) · Γ(N_H/2)/Γ((N_H − 1)/2),
 *   N_H = N − 1,  W = f_max · T_eff,  T_eff = √(4π·Var_w(t)),
 *
 * with FAP₁ the single-frequency probability for a model of d_K = 3 parameters against d_H = 1, Var_w the
 * weighted variance of the times and f_max the highest frequency searched. It is accurate for small FAP,
 * where it matters, and conservative otherwise.
 */
import { gammaln } from 'simple-statistics';

export interface FalseAlarmInput {
	power: number;
	nPoints: number;
	maxFrequency: number;
	/** Σw(t − t̄)² with normalised weights. */
	weightedTimeVariance: number;
}

/** (1 − p)^{(N−3)/2}: chance that one frequency reaches power p in pure noise. */
export function singleFrequencyFalseAlarm(power: number, nPoints: number): number {
	return Math.pow(1 - power, 0.5 * (nPoints - 3));
}

export function falseAlarmProbability(input: FalseAlarmInput): number {
	const { power, nPoints, maxFrequency, weightedTimeVariance } = input;
	if (!(power > 0)) return 1;
	if (power >= 1) return 0;
	const nH = nPoints - 1;
	const nK = nPoints - 3;
	const single = singleFrequencyFalseAlarm(power, nPoints);
	const gamma = Math.sqrt(2 / nH) * Math.exp(gammaln(nH / 2) - gammaln((nH - 1) / 2));
	const effectiveBaseline = Math.sqrt(4 * Math.PI * weightedTimeVariance);
	const tau =
		gamma * maxFrequency * effectiveBaseline * Math.pow(1 - power, 0.5 * (nK - 1)) * Math.sqrt(0.5 * nH * power);
	// 1 − (1 − a)e^{−τ} = a + (1 − a)(1 − e^{−τ}), written so tiny probabilities keep their digits.
	const probability = single - (1 - single) * Math.expm1(-tau);
	return Math.min(1, probability);
}
