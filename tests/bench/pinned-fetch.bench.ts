/**
 * Pinned-version fetch benchmark: the same frozen public version's bytes served three ways, each loaded
 * by autocannon with 64 connections for 10 s after a 2 s warm-up, on the same machine in one run:
 * - baseline: a bare node:http server that does nothing but write those bytes and headers — the floor
 *   any server on this machine can reach;
 * - front server (cache hit): `serve.ts` with the anonymous rate limit off, answering from memory;
 * - SvelteKit path: the same URL sent with a cookie, which the front server never answers from memory,
 *   so every request runs the hooks, the access policy and the database reads.
 * Target: the front server reaches at least half the baseline's requests/s with p99 under 20 ms.
 *
 * Starts its own throwaway PostgreSQL and fake S3 server, migrates and seeds the invented demo, and
 * builds the app if the build is stale. Run alone: `node --import tsx tests/bench/pinned-fetch.bench.ts`.
 */
import { spawn, type ChildProcess } from 'node:child_process';
import { mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { availableParallelism, loadavg, tmpdir } from 'node:os';
import { join } from 'node:path';
import { pathToFileURL } from 'node:url';
import autocannon from 'autocannon';
import { MikroORM } from '@mikro-orm/postgresql';
import config from '../../mikro-orm.config';
import { buildIfStale } from '../../src/lib/server/ops/build';
import { openThrowawayDatabase } from '../../src/lib/server/ops/local-database';
import { startLocalObjectStore } from '../../src/lib/server/ops/local-object-store';
import { migrateDatabase, seedDemo } from '../../src/lib/server/ops/migrate';
import { freePort } from '../../src/lib/server/ops/postgres-cluster';
import { PROJECT_ROOT } from '../../src/lib/server/ops/project-paths';

export interface PinnedFetchRow {
	path: string;
	'req/s': string;
	'p50 ms': string;
	'p99 ms': string;
	'vs baseline': string;
	'timed out': number;
	target: string;
	met: boolean | null;
}

const CONNECTIONS = 64;
const SECONDS = 10;

async function waitFor(url: string, child: ChildProcess, seconds = 60): Promise<void> {
	const deadline = Date.now() + seconds * 1000;
	while (Date.now() < deadline) {
		if (child.exitCode !== null) throw new Error(`${url}: the server exited with ${child.exitCode}`);
		try {
			if ((await fetch(url)).ok) return;
		} catch {
			// not listening yet
		}
		await new Promise((resolve) => setTimeout(resolve, 200));
	}
	throw new Error(`${url} did not answer within ${seconds} s`);
}

function startNode(args: string[], env: NodeJS.ProcessEnv): ChildProcess {
	return spawn(process.execPath, args, { cwd: PROJECT_ROOT, env, stdio: ['ignore', 'ignore', 'inherit'] });
}

/** A public version that is not embargoed, from the seeded demo. */
async function publicVersionPath(databaseUrl: string): Promise<string> {
	const orm = await MikroORM.init({ ...config, clientUrl: databaseUrl, debug: false });
	try {
		const [row] = await orm.em.getConnection().execute<{ slug: string; number: number }[]>(
			`select r.slug, v.number from app_relation r
			 join app_relation_version v on v.relation_id = r.id
			 join app_version_lifecycle l on l.relation_id = r.id and l.number = v.number
			 where r.visibility = 'public' and (l.embargo_until is null or l.released_at is not null)
			 order by length(v.content::text) desc limit 1`
		);
		if (!row) throw new Error('the demo seed has no public version');
		return `/api/v1/pins/${row.slug}@${row.number}`;
	} finally {
		await orm.close(true);
	}
}

const BASELINE_SERVER = `
const { createServer } = require('node:http');
const { readFileSync } = require('node:fs');
const { headers, body } = JSON.parse(readFileSync(process.argv[1], 'utf8'));
const bytes = Buffer.from(body, 'base64');
createServer((req, res) => {
	res.writeHead(200, { ...headers, 'content-length': bytes.length });
	res.end(bytes);
}).listen(Number(process.argv[2]), '127.0.0.1');
`;

async function load(url: string, headers: Record<string, string> = {}) {
	await autocannon({ url, connections: CONNECTIONS, duration: 2, headers });
	const result = await autocannon({ url, connections: CONNECTIONS, duration: SECONDS, headers });
	if (result.non2xx > 0) throw new Error(`${url}: ${result.non2xx} answers were not 2xx`);
	// Errors are requests autocannon gave up on (its 10 s timeout); they count against the path.
	return {
		perSecond: result.requests.average,
		p50: result.latency.p50,
		p99: result.latency.p99,
		failed: result.errors
	};
}

export async function runPinnedFetchBenchmarks(): Promise<{ rows: PinnedFetchRow[]; bytes: number }> {
	buildIfStale();
	const scratch = mkdtempSync(join(tmpdir(), 'candlebook-bench-'));
	const database = await openThrowawayDatabase('candlebook_bench');
	const objects = await startLocalObjectStore(join(scratch, 'objects'));
	const children: ChildProcess[] = [];
	try {
		await migrateDatabase({ ownerUrl: database.ownerUrl, runtimeUrl: database.url });
		Object.assign(process.env, objects.env);
		await seedDemo(database.url);
		const path = await publicVersionPath(database.url);

		const frontPort = await freePort();
		const front = startNode(['--import', 'tsx', join(PROJECT_ROOT, 'src/lib/server/ops/serve.ts')], {
			...process.env,
			...objects.env,
			DATABASE_URL: database.url,
			HOST: '127.0.0.1',
			PORT: String(frontPort),
			ORIGIN: `http://127.0.0.1:${frontPort}`,
			CANDLEBOOK_ANON_RATE_LIMIT: '0',
			CANDLEBOOK_IN_PROCESS_WORKER: 'false',
			// Request logs off in both measured paths: the comparison is of serving, not of logging.
			LOG_LEVEL: 'warn'
		});
		children.push(front);
		const frontUrl = `http://127.0.0.1:${frontPort}${path}`;
		await waitFor(`http://127.0.0.1:${frontPort}/healthz`, front);

		const first = await fetch(frontUrl);
		const body = Buffer.from(await first.arrayBuffer());
		if (first.status !== 200) throw new Error(`${path} answered ${first.status}`);
		const headers: Record<string, string> = {};
		for (const name of ['content-type', 'etag', 'content-digest', 'cache-control', 'access-control-allow-origin']) {
			const value = first.headers.get(name);
			if (value) headers[name] = value;
		}
		const again = await fetch(frontUrl);
		if (!again.headers.get('cache-status')?.includes('hit')) throw new Error(`${path} was not answered from memory`);

		const answerFile = join(scratch, 'answer.json');
		writeFileSync(answerFile, JSON.stringify({ headers, body: body.toString('base64') }));
		const basePort = await freePort();
		const baseline = startNode(['-e', BASELINE_SERVER, answerFile, String(basePort)], process.env);
		children.push(baseline);
		const baseUrl = `http://127.0.0.1:${basePort}${path}`;
		await waitFor(baseUrl, baseline);

		const base = await load(baseUrl);
		const cached = await load(frontUrl);
		const app = await load(frontUrl, { cookie: 'bench=1' });
		const row = (label: string, measured: typeof base, target?: { text: string; met: boolean }): PinnedFetchRow => ({
			path: label,
			'req/s': measured.perSecond.toFixed(0),
			'p50 ms': measured.p50.toFixed(1),
			'p99 ms': measured.p99.toFixed(1),
			'vs baseline': `${((100 * measured.perSecond) / base.perSecond).toFixed(0)}%`,
			'timed out': measured.failed,
			target: target ? `${target.text}: ${target.met ? 'met' : 'MISSED'}` : '—',
			met: target ? target.met : null
		});
		return {
			bytes: body.length,
			rows: [
				row('baseline: bare node:http, same bytes', base),
				row('front server, cache hit', cached, {
					text: '≥ 50% of baseline, p99 < 20 ms',
					met: cached.perSecond >= 0.5 * base.perSecond && cached.p99 < 20 && cached.failed === 0
				}),
				row('SvelteKit path (cache bypassed by a cookie)', app)
			]
		};
	} finally {
		for (const child of children) child.kill('SIGKILL');
		await objects.close();
		database.stop();
		rmSync(scratch, { recursive: true, force: true });
	}
}

export function printPinnedFetchBenchmarks(result: { rows: PinnedFetchRow[]; bytes: number }): void {
	console.log(
		`Candlebook pinned-version fetch — ${result.bytes} B JSON, autocannon ${CONNECTIONS} connections × ${SECONDS} s, node ${process.version}, load average ${loadavg()[0].toFixed(1)} on ${availableParallelism()} cores (other work on the machine lowers every row alike)`
	);
	console.table(result.rows.map(({ met: _met, ...row }) => row));
}

if (process.argv[1] && import.meta.url === pathToFileURL(process.argv[1]).href) {
	const result = await runPinnedFetchBenchmarks();
	printPinnedFetchBenchmarks(result);
	if (result.rows.some((row) => row.met === false)) process.exitCode = 1;
}
