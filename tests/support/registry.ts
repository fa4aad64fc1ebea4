import { mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import type { MikroORM } from '@mikro-orm/postgresql';
import { syntheticCalibrators } from '../../src/lib/calibration/index';
import { Group, GroupMembership, User, type GroupStanding, type Role } from '../../src/lib/server/entities/index';
import type { Actor } from '../../src/lib/server/registry/actor';
import { startLocalObjectServer, type LocalObjectServer } from '../../src/lib/server/storage/local-object-server';
import { ObjectStorage } from '../../src/lib/server/storage/object-storage';

/** Shared set-up for registry tests: people, a group, a local S3 server and invented calibrators. */
export const unique = (label: string) => `${label}-${crypto.randomUUID().slice(0, 8)}`;

export async function createActor(
	orm: MikroORM,
	label: string,
	roles: Role[],
	groups: { groupId: string; standing: GroupStanding }[] = []
): Promise<Actor & { email: string }> {
	const em = orm.em.fork();
	const user = em.create(User, {
		email: `${unique(label)}@registry.test`,
		displayName: `Test ${label}`,
		affiliation: null,
		orcid: null,
		roles,
		activatedAt: new Date()
	});
	await em.flush();
	for (const { groupId, standing } of groups) em.create(GroupMembership, { group: groupId, user, standing });
	await em.flush();
	return { id: user.id, displayName: user.displayName, roles: user.roles, email: user.email };
}

export async function createGroup(orm: MikroORM, label: string) {
	const em = orm.em.fork();
	const group = em.create(Group, { slug: unique(label), name: `Group ${label}`, description: null });
	await em.flush();
	return group;
}

export interface TestObjectStore {
	storage: ObjectStorage;
	close: () => Promise<void>;
}

export async function startTestObjectStore(): Promise<TestObjectStore> {
	const directory = mkdtempSync(join(tmpdir(), 'candlebook-registry-s3-'));
	const server: LocalObjectServer = await startLocalObjectServer(directory, 'candlebook-registry-test');
	const storage = new ObjectStorage(server.options);
	await storage.ensureBucket();
	return {
		storage,
		close: async () => {
			storage.destroy();
			await server.close();
			rmSync(directory, { recursive: true, force: true });
		}
	};
}

/**
 * Invented host-galaxy Cepheids (μ = 18.5 ± 0.03) from a known W_VI relation, as canonical CSV. The
 * `seed` varies the noise so two uploads differ.
 */
export function hostCalibratorCsv(options: { count?: number; seed?: number; zeroPoint?: number } = {}): string {
	const points = syntheticCalibrators(
		{ zeroPoint: options.zeroPoint ?? -5.9, slope: -3.3, intrinsicScatter: 0.08 },
		{ count: options.count ?? 40, seed: options.seed ?? 7 }
	);
	const header = 'star,cross_id,population,period_days,mag_W_VI,mag_err_W_VI,mu_host,mu_host_err,host,reference';
	const rows = points.map(
		(point, i) =>
			`Invented ${point.star},${9000 + i},classical_fundamental,${(10 ** point.logPeriod).toFixed(6)},` +
			`${(point.absMag + 18.5).toFixed(4)},${point.absMagErr.toFixed(4)},18.5,0.03,Invented Host,Invented 2026`
	);
	return [header, ...rows].join('\n') + '\n';
}

export const HOST_FIT = {
	band: 'W_VI',
	population: 'classical_fundamental',
	anchor: 'host',
	method: 'ml_scatter',
	clipping: { sigma: 3, max_iterations: 5 }
} as const;
