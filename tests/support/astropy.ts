import { spawnSync } from 'node:child_process';

/**
 * Reference values from astropy (Debian's python3-astropy), computed in the test run by the system
 * Python. `CANDLEBOOK_PYTHON` overrides the interpreter.
 */
export const PYTHON = process.env.CANDLEBOOK_PYTHON ?? '/usr/bin/python3';

let cachedVersion: string | null | undefined;

/** astropy's version, or null when the interpreter cannot import it. */
export function astropyVersion(): string | null {
	if (cachedVersion === undefined) {
		const result = spawnSync(PYTHON, ['-c', 'import astropy, numpy; print(astropy.__version__)'], { encoding: 'utf8' });
		cachedVersion = result.status === 0 ? result.stdout.trim() : null;
	}
	return cachedVersion;
}

export function hasAstropy(): boolean {
	return astropyVersion() !== null;
}

export const ASTROPY_MISSING_REASON = `astropy is not importable by ${PYTHON} (Debian package python3-astropy)`;

/**
 * Runs a Python script that reads JSON from stdin (`data = json.load(sys.stdin)`, preloaded) and prints
 * one JSON document; returns it parsed. Throws with Python's stderr on failure.
 */
export function runPython<T>(script: string, input: unknown): T {
	const program = `import json, sys\ndata = json.load(sys.stdin)\n${script}`;
	const result = spawnSync(PYTHON, ['-c', program], {
		input: JSON.stringify(input),
		encoding: 'utf8',
		maxBuffer: 256 * 1024 * 1024
	});
	if (result.status !== 0) throw new Error(`python failed (${result.status}): ${result.stderr}`);
	return JSON.parse(result.stdout) as T;
}
