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
	type DatabaseRoles,
	type RoleCredentials
} from './postgres-cluster';
import { PROJECT_ROOT } from './project-paths';
import { ensureSystemPackages, isRoot, POSTGRESQL } from './system-packages';

export interface RunningDatabase {
	/** The runtime role's URL: what the app, workers and tests connect with. */
	url: string;
	/** The owner role's URL: for migrations, and for tests that clean tables. */
	ownerUrl: string;
	port: number;
	/** Where the cluster's files live. */
	location: string;
	stop: () => void;
}

/**
 * `.state/database.json`. `role`/`password` name the owner role: clusters made before the runtime role
 * existed had only that one role, which owns every table, so it stays the owner.
 */
export interface LocalState extends RoleCredentials {
	database: string;
	runtimeRole?: string;
	runtimePassword?: string;
	superuserPassword: string;
	port: number | null;
}

export const RUNTIME_ROLE = 'candlebook_app';

/** The roles of the local cluster, adding the runtime role to a state file written before it existed. */
export function localDatabaseRoles(state: LocalState): DatabaseRoles {
	state.runtimeRole ??= RUNTIME_ROLE;
	state.runtimePassword ??= randomSecret();
	return {
		database: state.database,
		owner: { role: state.role, password: state.password },
		runtime: { role: state.runtimeRole, password: state.runtimePassword }
	};
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
	const earlier = readJson<LocalState>(statePath);
	const state: LocalState = earlier ?? {
		role: 'candlebook_owner',
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
	if (earlier && !earlier.runtimeRole) {
		console.log(
			`[candlebook] adding the runtime role ${RUNTIME_ROLE}: the app stops connecting as ${state.role}, which owns the tables`
		);
	}
	const roles = localDatabaseRoles(state);
	cluster.ensureDatabase(roles);
	writeSecretJson(statePath, { ...state, port });
	return {
		url: cluster.databaseUrl(roles.runtime, roles.database),
		ownerUrl: cluster.databaseUrl(roles.owner, roles.database),
		port,
		location: cluster.options.dataDir,
		stop: () => cluster.stop()
	};
}

/**
 * A throwaway cluster in a temp folder (`stop` removes every trace of it) with the named database, and
 * any `extraDatabases` beside it with the same two roles (their URLs in `extraUrls` and
 * `extraOwnerUrls`), e.g. one for checking the demo seed alone.
 */
export async function openThrowawayDatabase(
	database = 'candlebook_test',
	extraDatabases: string[] = []
): Promise<RunningDatabase & { extraUrls: Record<string, string>; extraOwnerUrls: Record<string, string> }> {
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
	const owner = { role: 'candlebook_owner', password: randomSecret() };
	const runtime = { role: RUNTIME_ROLE, password: randomSecret() };
	const stop = () => {
		cluster.stop();
		rmSync(root, { recursive: true, force: true });
	};
	try {
		cluster.initialise();
		cluster.start();
		for (const name of [database, ...extraDatabases]) cluster.ensureDatabase({ database: name, owner, runtime });
	} catch (error) {
		stop();
		throw error;
	}
	const urlsOf = (role: RoleCredentials) =>
		Object.fromEntries(extraDatabases.map((extra) => [extra, cluster.databaseUrl(role, extra)]));
	return {
		url: cluster.databaseUrl(runtime, database),
		ownerUrl: cluster.databaseUrl(owner, database),
		extraUrls: urlsOf(runtime),
		extraOwnerUrls: urlsOf(owner),
		port: cluster.options.port,
		location: root,
		stop
	};
}
