import { createHash } from 'node:crypto';
import { chmodSync, mkdirSync, mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import {
	freePort,
	giveToServerUser,
	PostgresCluster,
	randomSecret,
	readJson,
	serverUserCanWrite,
	writeSecretJson,
	type DatabaseCredentials
} from './postgres-cluster';
import { PROJECT_ROOT } from './project-paths';
import { ensureSystemPackages, isRoot, POSTGRESQL } from './system-packages';

export interface RunningDatabase {
	url: string;
	port: number;
	/** Where the cluster's files live. */
	location: string;
	stop: () => void;
}

interface LocalState extends DatabaseCredentials {
	superuserPassword: string;
	port: number | null;
}

function requestedPort(): number | undefined {
	const raw = process.env.CANDLEBOOK_DB_PORT;
	if (!raw) return undefined;
	const port = Number(raw);
	if (!Number.isInteger(port) || port < 1 || port > 65535) {
		throw new Error(`CANDLEBOOK_DB_PORT must be a TCP port number, got "${raw}"`);
	}
	return port;
}

/**
 * The persistent cluster's folder: `.state/` in the checkout, unless the `postgres` user cannot reach
 * it (a checkout under a root-only folder), then a per-checkout folder under /var/lib/candlebook.
 */
export function localStateDir(): string {
	if (process.env.CANDLEBOOK_STATE_DIR) return process.env.CANDLEBOOK_STATE_DIR;
	const inCheckout = join(PROJECT_ROOT, '.state');
	const clusterRoot = join(inCheckout, 'postgres');
	mkdirSync(inCheckout, { recursive: true, mode: 0o755 });
	mkdirSync(clusterRoot, { recursive: true, mode: 0o700 });
	giveToServerUser(clusterRoot);
	if (!isRoot() || serverUserCanWrite(clusterRoot)) return inCheckout;
	const checkoutId = createHash('sha256').update(PROJECT_ROOT).digest('hex').slice(0, 12);
	const elsewhere = join('/var/lib/candlebook', checkoutId);
	console.log(`[candlebook] the postgres user cannot reach ${inCheckout}; keeping the database in ${elsewhere}`);
	return elsewhere;
}

/** Opens the project's own persistent cluster (creating it on first use). Data survives restarts. */
export async function openLocalDatabase(): Promise<RunningDatabase> {
	ensureSystemPackages([POSTGRESQL]);
	const stateDir = localStateDir();
	mkdirSync(stateDir, { recursive: true, mode: 0o755 });
	const statePath = join(stateDir, 'database.json');
	const state: LocalState = readJson<LocalState>(statePath) ?? {
		role: 'candlebook',
		database: 'candlebook',
		password: randomSecret(),
		superuserPassword: randomSecret(),
		port: null
	};
	const requested = requestedPort();
	// The port asked for, else the last one if it is still free, else any free one.
	const port =
		requested !== undefined
			? await freePort(requested)
			: await freePort(state.port ?? undefined).catch(() => freePort());
	const cluster = new PostgresCluster({
		dataDir: join(stateDir, 'postgres', 'data'),
		runDir: join(stateDir, 'postgres', 'run'),
		port,
		throwaway: false,
		superuserPassword: state.superuserPassword
	});
	if (!cluster.isInitialised) {
		console.log(`[candlebook] creating a PostgreSQL cluster in ${cluster.options.dataDir}`);
		cluster.initialise();
	}
	// A cluster left running by a killed process is stopped so it restarts on the port chosen now.
	if (cluster.isRunning()) cluster.stop();
	cluster.start();
	cluster.ensureDatabase(state);
	writeSecretJson(statePath, { ...state, port });
	return { url: cluster.databaseUrl(state), port, location: cluster.options.dataDir, stop: () => cluster.stop() };
}

/** Starts a throwaway cluster in a temp folder; `stop` removes every trace of it. */
/**
 * A throwaway cluster with the named database, and any `extraDatabases` beside it in the same cluster
 * and owned by the same role (their URLs in `extraUrls`), e.g. one for checking the demo seed alone.
 */
export async function openThrowawayDatabase(
	database = 'candlebook_test',
	extraDatabases: string[] = []
): Promise<RunningDatabase & { extraUrls: Record<string, string> }> {
	ensureSystemPackages([POSTGRESQL]);
	const root = mkdtempSync(join(tmpdir(), 'candlebook-pg-'));
	// mkdtemp makes a root-only folder; the postgres user must be able to pass through it.
	chmodSync(root, 0o755);
	const cluster = new PostgresCluster({
		dataDir: join(root, 'data'),
		runDir: join(root, 'run'),
		port: await freePort(requestedPort()),
		throwaway: true
	});
	const credentials = { role: 'candlebook', password: randomSecret(), database };
	const stop = () => {
		cluster.stop();
		rmSync(root, { recursive: true, force: true });
	};
	try {
		cluster.initialise();
		cluster.start();
		cluster.ensureDatabase(credentials);
		for (const extra of extraDatabases) cluster.ensureDatabase({ ...credentials, database: extra });
	} catch (error) {
		stop();
		throw error;
	}
	return {
		url: cluster.databaseUrl(credentials),
		extraUrls: Object.fromEntries(
			extraDatabases.map((extra) => [extra, cluster.databaseUrl({ ...credentials, database: extra })])
		),
		port: cluster.options.port,
		location: root,
		stop
	};
}
