/**
 * Plot options of the PL diagram and its residual panel (Observable Plot). Absolute magnitude runs
 * brighter-up, as astronomers draw it; the validity range is shaded; the fitted line is solid inside it
 * and dashed outside, where using the relation is an extrapolation.
 */
import * as Plot from '@observablehq/plot';

export interface DiagramStar {
	star: string;
	logPeriod: number;
	absMag: number;
	absMagErr: number;
	residual: number;
	used: boolean;
}

export interface DiagramRelation {
	zeroPoint: number;
	slope: number;
	pivotLogPeriod: number;
	validity: { min: number; max: number };
	band: string;
}

/** Class names of the marks' groups, so a reader of the SVG (or a test) can tell the marks apart. */
export const USED_CLASS = 'cb-used-calibrators';
export const REJECTED_CLASS = 'cb-rejected-calibrators';
const USED = 'var(--cb-tide)';
const REJECTED = 'var(--cb-rust)';
const LINE = 'var(--cb-ember)';

const predicted = (relation: DiagramRelation, logPeriod: number) =>
	relation.zeroPoint + relation.slope * (logPeriod - relation.pivotLogPeriod);

function xDomain(stars: DiagramStar[], relation: DiagramRelation): [number, number] {
	const values = [...stars.map((star) => star.logPeriod), relation.validity.min, relation.validity.max];
	const min = Math.min(...values);
	const max = Math.max(...values);
	const pad = Math.max(0.05, (max - min) * 0.06);
	return [min - pad, max + pad];
}

const title = (star: DiagramStar) =>
	`${star.star}\nlog P = ${star.logPeriod.toFixed(3)}\nM = ${star.absMag.toFixed(3)} ± ${star.absMagErr.toFixed(3)}\n${star.used ? 'used' : 'rejected'}`;

export function plDiagramOptions(stars: DiagramStar[], relation: DiagramRelation, width = 640): Plot.PlotOptions {
	const used = stars.filter((star) => star.used);
	const rejected = stars.filter((star) => !star.used);
	const [x0, x1] = xDomain(stars, relation);
	const { min, max } = relation.validity;
	const segment = (a: number, b: number) => [
		{ logPeriod: a, mag: predicted(relation, a) },
		{ logPeriod: b, mag: predicted(relation, b) }
	];
	return {
		width,
		height: Math.round(width * 0.6),
		marginLeft: 52,
		x: { domain: [x0, x1], label: 'log₁₀ P (days)' },
		y: { reverse: true, label: `Absolute magnitude, ${relation.band}`, grid: true },
		marks: [
			Plot.rectX([{ x1: min, x2: max }], {
				x1: 'x1',
				x2: 'x2',
				fill: USED,
				fillOpacity: 0.08,
				className: 'cb-validity-range'
			}),
			Plot.line(segment(x0, min), {
				x: 'logPeriod',
				y: 'mag',
				stroke: LINE,
				strokeDasharray: '4 4',
				strokeOpacity: 0.7
			}),
			Plot.line(segment(max, x1), {
				x: 'logPeriod',
				y: 'mag',
				stroke: LINE,
				strokeDasharray: '4 4',
				strokeOpacity: 0.7
			}),
			Plot.ruleX(used, {
				x: 'logPeriod',
				y1: (star: DiagramStar) => star.absMag - star.absMagErr,
				y2: (star: DiagramStar) => star.absMag + star.absMagErr,
				stroke: USED,
				strokeOpacity: 0.6,
				className: 'cb-error-bars'
			}),
			Plot.line(segment(min, max), {
				x: 'logPeriod',
				y: 'mag',
				stroke: LINE,
				strokeWidth: 2,
				className: 'cb-fitted-relation'
			}),
			Plot.dot(used, {
				x: 'logPeriod',
				y: 'absMag',
				r: 3,
				fill: USED,
				title,
				className: USED_CLASS
			}),
			Plot.dot(rejected, {
				x: 'logPeriod',
				y: 'absMag',
				r: 4.5,
				symbol: 'times',
				stroke: REJECTED,
				strokeWidth: 2,
				title,
				className: REJECTED_CLASS
			})
		]
	};
}

export function residualOptions(stars: DiagramStar[], relation: DiagramRelation, width = 640): Plot.PlotOptions {
	const [x0, x1] = xDomain(stars, relation);
	return {
		width,
		height: Math.round(width * 0.28),
		marginLeft: 52,
		x: { domain: [x0, x1], label: 'log₁₀ P (days)' },
		y: { reverse: true, label: 'Residual (mag)', grid: true },
		marks: [
			Plot.rectX([{ x1: relation.validity.min, x2: relation.validity.max }], {
				x1: 'x1',
				x2: 'x2',
				fill: USED,
				fillOpacity: 0.08
			}),
			Plot.ruleY([0], { stroke: LINE }),
			Plot.dot(
				stars.filter((star) => star.used),
				{
					x: 'logPeriod',
					y: 'residual',
					r: 2.5,
					fill: USED,
					title,
					className: `${USED_CLASS}-residuals`
				}
			),
			Plot.dot(
				stars.filter((star) => !star.used),
				{
					x: 'logPeriod',
					y: 'residual',
					r: 4,
					symbol: 'times',
					stroke: REJECTED,
					strokeWidth: 2,
					title,
					className: `${REJECTED_CLASS}-residuals`
				}
			)
		]
	};
}
