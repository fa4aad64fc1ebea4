import { createHash } from 'node:crypto';
import { mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, test } from 'vitest';
import { startLocalObjectServer, type LocalObjectServer } from '../../src/lib/server/storage/local-object-server';
import { ObjectStorage } from '../../src/lib/server/storage/object-storage';
import { STAGING_PREFIX, sweepStagedFiles } from '../../src/lib/server/storage/staging-sweep';

let server: LocalObjectServer;
let storage: ObjectStorage;
let directory: string;

beforeAll(async () => {
	directory = mkdtempSync(join(tmpdir(), 'candlebook-s3-'));
	server = await startLocalObjectServer(directory, 'candlebook-test');
	storage = new ObjectStorage(server.options);
	await storage.ensureBucket();
});

afterAll(async () => {
	storage.destroy();
	await server.close();
	rmSync(directory, { recursive: true, force: true });
});

describe('object storage through the AWS SDK against a local S3 server', () => {
	test('the fake server listens on 127.0.0.1 only', () => {
		expect(new URL(server.options.endpoint!).hostname).toBe('127.0.0.1');
	});

	test('a file is stored under its sha256 and read back byte for byte', async () => {
		const body = new TextEncoder().encode('star,population,period_days\nInvented A,classical_fundamental,5.4\n');
		const stored = await storage.putContentAddressed('calibrator-sources', body, 'text/csv');
		// sha256 from node:crypto (OpenSSL), independent of the storage code path.
		const expected = createHash('sha256').update(body).digest('hex');
		expect(stored).toEqual({ key: `calibrator-sources/sha256/${expected}`, sha256: expected, size: body.byteLength });
		expect(await storage.exists(stored.key)).toBe(true);
		expect(Buffer.from(await storage.get(stored.key))).toEqual(Buffer.from(body));
	});

	test('storing the same bytes twice keeps one object; deleting removes it', async () => {
		const body = new TextEncoder().encode(`unique ${crypto.randomUUID()}`);
		const first = await storage.putContentAddressed('calibrator-sources', body, 'text/plain');
		const second = await storage.putContentAddressed('calibrator-sources', body, 'text/plain');
		expect(second.key).toBe(first.key);
		await storage.delete(first.key);
		expect(await storage.exists(first.key)).toBe(false);
	});

	test('the staging sweep removes staged files written before the cutoff, and nothing outside staging', async () => {
		const encode = (text: string) => new TextEncoder().encode(text);
		// Two people's staged files, and a source file that must survive.
		const staged = await Promise.all(
			['person-a', 'person-b'].map((person) =>
				storage.putContentAddressed(`${STAGING_PREFIX}${person}`, encode(`star\n${person}\n`), 'text/csv')
			)
		);
		const source = await storage.putContentAddressed('calibrator-sources', encode('star\nkept\n'), 'text/csv');

		// Written just now: an hour-old cutoff keeps them.
		expect(await sweepStagedFiles(storage, new Date(Date.now() - 3_600_000))).toEqual({ removed: 0, kept: 2 });
		expect(await sweepStagedFiles(storage, new Date(Date.now() + 60_000))).toEqual({ removed: 2, kept: 0 });
		for (const object of staged) expect(await storage.exists(object.key)).toBe(false);
		expect(await storage.exists(source.key)).toBe(true);
	});
});
