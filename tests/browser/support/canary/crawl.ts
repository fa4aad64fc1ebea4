import type { Canary, CallerName } from './canaries';
import { crawlGet, inPool, type CrawlResponse } from './http';
import type { CrawlTarget } from './routes';
import type { CrawlCaller } from './seed';

export const CONCURRENCY = 4;

export interface Leak {
	row: string;
	path: string;
	caller: CallerName;
	canary: string;
	needle: string;
	/** `body`, `header`, or `body (zip (3 entries))`. */
	where: string;
}

export interface CrawlResult {
	requests: number;
	checksPassed: number;
	/** Checks skipped because the caller's own URL carries the canary (a search echoing its query). */
	echoes: number;
	leaks: Leak[];
	/** Canaries a caller allowed to see them never saw anywhere. */
	unseen: string[];
	serverErrors: string[];
	/** Rows no URL of which answered the admin with 2xx. */
	unreachedRows: string[];
	/** Whether any body was an archive that had to be unpacked. */
	unpackedArchive: boolean;
}

export interface Fetched {
	target: CrawlTarget;
	caller: CrawlCaller;
	response: CrawlResponse;
}

/**
 * Every target as every caller, privileged callers first for each URL, four requests at a time. Pages
 * never read API tokens (the authorization matrix proves it), so a token caller asks for a page only
 * as its data endpoint, which runs the same load.
 */
export async function fetchAll(origin: string, targets: CrawlTarget[], callers: CrawlCaller[]): Promise<Fetched[]> {
	const work = targets.flatMap((target) =>
		callers
			.filter((caller) => caller.kind !== 'token' || !target.page || target.data)
			.map((caller) => ({ target, caller }))
	);
	return inPool(work, CONCURRENCY, async ({ target, caller }) => ({
		target,
		caller,
		response: await crawlGet(`${origin}${target.path}`, caller.headers)
	}));
}

/** A response's headers and body in lower case, as canaries search them. */
interface Searchable {
	headers: string;
	body: string;
	decoding: string[];
}

/** Where in a response the canary shows, or null. */
function locate(canary: Canary, response: Searchable): { needle: string; where: string } | null {
	const inHeaders = canary.find(response.headers);
	if (inHeaders) return { needle: inHeaders, where: 'header' };
	const inBody = canary.find(response.body);
	if (!inBody) return null;
	return { needle: inBody, where: response.decoding.length ? `body (${response.decoding.join(', ')})` : 'body' };
}

export function judge(fetched: Fetched[], canaries: Canary[], rows: string[]): CrawlResult {
	const result: CrawlResult = {
		requests: fetched.length,
		checksPassed: 0,
		echoes: 0,
		leaks: [],
		unseen: [],
		serverErrors: [],
		unreachedRows: [],
		unpackedArchive: false
	};
	const seen = new Set<string>();
	const reached = new Set<string>();
	const anonymousOk = new Set<string>();
	const adminRedirected = new Map<string, string>();
	for (const { target, caller, response } of fetched) {
		if (response.decoding.some((step) => step.startsWith('zip'))) result.unpackedArchive = true;
		if (response.status >= 500) result.serverErrors.push(`${response.status} GET ${target.path} as ${caller.name}`);
		if (!target.data) {
			const ok = response.status >= 200 && response.status < 300;
			if (caller.name === 'admin' && ok) reached.add(target.row);
			if (caller.name === 'admin' && response.status >= 300 && response.status < 400)
				adminRedirected.set(target.row, target.path);
			if (caller.name === 'anonymous' && ok) anonymousOk.add(target.row);
		}
		const requested = decodeURIComponent(target.path).toLowerCase();
		const searchable = {
			headers: response.headerText.toLowerCase(),
			body: response.bodyText.toLowerCase(),
			decoding: response.decoding
		};
		for (const canary of canaries) {
			const found = locate(canary, searchable);
			if (canary.visibleTo.has(caller.name)) {
				if (found) seen.add(`${canary.label}\u0000${caller.name}`);
				continue;
			}
			if (canary.find(requested)) {
				result.echoes++;
				continue;
			}
			if (!found) {
				result.checksPassed++;
				continue;
			}
			result.leaks.push({ row: target.row, path: target.path, caller: caller.name, canary: canary.label, ...found });
		}
	}
	for (const canary of canaries) {
		for (const caller of canary.visibleTo) {
			if (seen.has(`${canary.label}\u0000${caller}`)) result.checksPassed++;
			else result.unseen.push(`${canary.label} (${canary.needles[0]}) never shown to ${caller}`);
		}
	}
	for (const row of rows) {
		if (reached.has(row)) continue;
		// A page for signed-out visitors (sign-in) sends a signed-in admin on; the public reaches it.
		if (adminRedirected.has(row) && anonymousOk.has(row)) continue;
		result.unreachedRows.push(row);
	}
	return result;
}

/** The rows that took longest, with how many requests each made. */
export function slowestRows(fetched: Fetched[], count = 6): string {
	const rows = new Map<string, { requests: number; ms: number }>();
	for (const { target, response } of fetched) {
		const row = rows.get(target.row) ?? { requests: 0, ms: 0 };
		row.requests++;
		row.ms += response.milliseconds;
		rows.set(target.row, row);
	}
	return [...rows]
		.sort(([, a], [, b]) => b.ms - a.ms)
		.slice(0, count)
		.map(([row, { requests, ms }]) => `${row}: ${requests} requests, ${Math.round(ms / requests)} ms each`)
		.join('; ');
}

/** Leaks grouped by route row and caller, one line per canary with an example URL. */
export function leakReport(leaks: Leak[]): string {
	const groups = new Map<string, Map<string, Leak[]>>();
	for (const leak of leaks) {
		const key = `${leak.row} as ${leak.caller}`;
		const byCanary = groups.get(key) ?? new Map<string, Leak[]>();
		byCanary.set(leak.canary, [...(byCanary.get(leak.canary) ?? []), leak]);
		groups.set(key, byCanary);
	}
	const lines: string[] = [];
	for (const [key, byCanary] of [...groups].sort(([a], [b]) => a.localeCompare(b))) {
		lines.push(key);
		for (const [canary, hits] of byCanary) {
			const example = hits[0];
			const more = hits.length > 1 ? ` (+${hits.length - 1} more URL${hits.length > 2 ? 's' : ''})` : '';
			lines.push(`  - ${canary} "${example.needle}" in ${example.where} of ${example.path}${more}`);
		}
	}
	return lines.join('\n');
}
