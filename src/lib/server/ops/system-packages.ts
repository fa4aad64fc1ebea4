import { spawnSync } from 'node:child_process';
import { existsSync, readdirSync } from 'node:fs';

/** A Debian package the project needs, with a cheap test that tells whether it is there. */
export interface SystemPackage {
	name: string;
	/** Why the project needs it, shown when it is missing. */
	purpose: string;
	isPresent: () => boolean;
}

export const POSTGRESQL: SystemPackage = {
	name: 'postgresql',
	purpose: 'the database server',
	isPresent: () => findPostgresBinDir() !== null
};

export const CHROMIUM: SystemPackage = {
	name: 'chromium',
	purpose: 'headless browser tests',
	isPresent: () => existsSync('/usr/bin/chromium')
};

export const PYTHON3_ASTROPY: SystemPackage = {
	name: 'python3-astropy',
	purpose: 'reference periodograms for the light-curve checks (Debian /usr/bin/python3)',
	isPresent: () => existsSync('/usr/lib/python3/dist-packages/astropy/timeseries')
};

export const LIBXML2_UTILS: SystemPackage = {
	name: 'libxml2-utils',
	purpose: 'xmllint, which validates exported VOTables against the IVOA schema',
	isPresent: () => existsSync('/usr/bin/xmllint')
};

/** Newest `/usr/lib/postgresql/<version>/bin` that holds `initdb`, or null. */
export function findPostgresBinDir(root = '/usr/lib/postgresql'): string | null {
	if (!existsSync(root)) return null;
	const versions = readdirSync(root)
		.filter((entry) => existsSync(`${root}/${entry}/bin/initdb`))
		.sort((a, b) => Number(a) - Number(b));
	const newest = versions.at(-1);
	return newest === undefined ? null : `${root}/${newest}/bin`;
}

export function isRoot(): boolean {
	return typeof process.getuid === 'function' && process.getuid() === 0;
}

function aptInstall(names: string[]): boolean {
	const env = { ...process.env, DEBIAN_FRONTEND: 'noninteractive' };
	const install = () =>
		spawnSync('apt-get', ['install', '-y', '--no-install-recommends', ...names], {
			stdio: 'inherit',
			env
		}).status === 0;
	if (install()) return true;
	// A fresh machine often has no package lists yet.
	spawnSync('apt-get', ['update'], { stdio: 'inherit', env });
	return install();
}

/**
 * Makes sure every package is installed: with apt when running as root, otherwise stops with the exact
 * command to run.
 */
export function ensureSystemPackages(packages: SystemPackage[]): void {
	const missing = packages.filter((pkg) => !pkg.isPresent());
	if (missing.length === 0) return;
	const names = missing.map((pkg) => pkg.name);
	const command = `sudo DEBIAN_FRONTEND=noninteractive apt-get install -y --no-install-recommends ${names.join(' ')}`;
	if (!isRoot()) {
		const reasons = missing.map((pkg) => `  ${pkg.name}: ${pkg.purpose}`).join('\n');
		throw new Error(`Missing Debian packages:\n${reasons}\nInstall them with:\n  ${command}`);
	}
	console.log(`[candlebook] installing ${names.join(', ')} with apt-get`);
	if (!aptInstall(names) || missing.some((pkg) => !pkg.isPresent())) {
		throw new Error(`apt-get could not install ${names.join(', ')}; try:\n  ${command.replace('sudo ', '')}`);
	}
}
