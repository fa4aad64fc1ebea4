/**
 * `npm run db -- <verb>`: the local database `npm start` uses.
 *   status   where the cluster lives and whether it is initialised
 *   reset    delete the local cluster and its data (the next `npm start` creates a fresh demo)
 */
import { rmSync } from 'node:fs';
import { join } from 'node:path';
import { localStateDir } from './local-database';
import { PostgresCluster } from './postgres-cluster';

const verb = process.argv[2] ?? 'status';
const stateDir = localStateDir();
const cluster = new PostgresCluster({
	dataDir: join(stateDir, 'postgres', 'data'),
	runDir: join(stateDir, 'postgres', 'run'),
	port: 0,
	throwaway: false
});

if (verb === 'status') {
	console.log(`state folder: ${stateDir}`);
	console.log(`cluster: ${cluster.isInitialised ? 'initialised' : 'not created yet'}`);
	console.log(`running: ${cluster.isInitialised && cluster.isRunning() ? 'yes' : 'no'}`);
} else if (verb === 'reset') {
	cluster.stop();
	rmSync(join(stateDir, 'postgres'), { recursive: true, force: true });
	rmSync(join(stateDir, 'database.json'), { force: true });
	console.log(`removed the local database in ${stateDir}; the next \`npm start\` creates a fresh one`);
} else {
	console.error(`unknown verb "${verb}"; use status or reset`);
	process.exit(2);
}
