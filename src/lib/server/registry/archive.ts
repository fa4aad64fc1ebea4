import type { EntityManager } from '@mikro-orm/postgresql';
import { sha256 } from '@oslojs/crypto/sha2';
import { encodeHexLowerCase } from '@oslojs/encoding';
import { Zip, ZipDeflate } from 'fflate';
import { canonicalJson } from '../../calibration/digest';
import {
	REVISION_FILE_EXTENSIONS,
	REVISION_FORMATS,
	REVISION_MEDIA_TYPES,
	renderRevision
} from '../../publishing/revision-export';
import { CalibratorRevision } from '../entities/calibrator-revision.entity';
import { RelationVersion } from '../entities/relation-version.entity';
import { VersionLifecycle } from '../entities/version-lifecycle.entity';
import { revisionContent } from './calibrator-sets';
import { isEmbargoed } from './versions';

/**
 * The deposit archive: every public, unembargoed frozen relation version (its exact pinned bytes) and
 * every revision of every public calibrator set (JSON, CSV and VOTable, the bytes the API serves), with
 * a manifest of SHA-256 digests and a README. It is streamed: at most BATCH items are held in memory,
 * so its size is bounded by the registry rather than by the server's memory.
 */
const BATCH = 50;
const encoder = new TextEncoder();
/** Changes whenever the archive's files or their layout change for the same listing, so old cache keys retire. */
const ARCHIVE_LAYOUT = 1;

export interface ManifestEntry {
	path: string;
	kind: 'relation-version' | 'calibrator-revision';
	/** `slug@version` for relation versions, `slug/revisions/n` for calibrator revisions. */
	ref: string;
	format: 'json' | 'csv' | 'votable';
	media_type: string;
	bytes: number;
	/** Lowercase hex SHA-256 of the file's bytes. */
	sha256: string;
	/** The content digest the registry states for the item (see the README). */
	digest: string;
}

interface ArchiveFile {
	path: string;
	bytes: Uint8Array;
	modified: Date;
}

/** fflate writes DOS times from local clock fields: shift so the archive is the same in every time zone. */
const dosTime = (date: Date) => new Date(date.getTime() + date.getTimezoneOffset() * 60_000);

/**
 * Everything the archive for this caller holds, and nothing more: what its cache key is made of and
 * what the build reads. Two callers share a built archive only when their listings are equal, so a
 * group's content can never reach a caller who may not see it, and any new or changed item (a version,
 * a revision, a set's title, licence or citations, an embargo ending) gives a new key.
 */
export interface ArchiveListing {
	/** Whose view this is: the archive holds public content only, the same for every caller. */
	scope: 'public';
	versions: { id: string; slug: string; number: number; digest: string; createdAt: string }[];
	revisions: {
		id: string;
		set: string;
		number: number;
		digest: string;
		createdAt: string;
		title: string;
		licence: string;
		citations: string[];
	}[];
}

export async function archiveListing(em: EntityManager, now = new Date()): Promise<ArchiveListing> {
	const lifecycles = await em.find(
		VersionLifecycle,
		{ relation: { visibility: 'public' } },
		{ populate: ['relation'], orderBy: { relation: { slug: 'asc' }, number: 'asc' } }
	);
	const open = lifecycles.filter((lifecycle) => !isEmbargoed(lifecycle, now));
	const frozen = open.length
		? await em.find(
				RelationVersion,
				{ id: { $in: open.map((lifecycle) => lifecycle.id) } },
				{ fields: ['id', 'number', 'digest', 'createdAt'] }
			)
		: [];
	const byId = new Map(frozen.map((version) => [version.id, version]));
	const revisions = await em.find(
		CalibratorRevision,
		{ calibratorSet: { visibility: 'public' } },
		{
			fields: [
				'id',
				'number',
				'digest',
				'createdAt',
				'calibratorSet.slug',
				'calibratorSet.title',
				'calibratorSet.licence',
				'calibratorSet.citations'
			],
			orderBy: { calibratorSet: { slug: 'asc' }, number: 'asc' }
		}
	);
	const listing: ArchiveListing = {
		scope: 'public',
		versions: open.flatMap((lifecycle) => {
			const version = byId.get(lifecycle.id);
			return version
				? [
						{
							id: version.id,
							slug: lifecycle.relation.slug,
							number: version.number,
							digest: version.digest,
							createdAt: version.createdAt.toISOString()
						}
					]
				: [];
		}),
		revisions: revisions.map((revision) => ({
			id: revision.id,
			set: revision.calibratorSet.slug,
			number: revision.number,
			digest: revision.digest,
			createdAt: revision.createdAt.toISOString(),
			title: revision.calibratorSet.title,
			licence: revision.calibratorSet.licence,
			citations: revision.calibratorSet.citations
		}))
	};
	em.clear();
	return listing;
}

/** The archive's content address: SHA-256 of the canonical listing (and the archive's layout version). */
export function archiveKey(listing: ArchiveListing): string {
	return encodeHexLowerCase(sha256(encoder.encode(canonicalJson({ layout: ARCHIVE_LAYOUT, listing }))));
}

async function* relationVersionFiles(em: EntityManager, listing: ArchiveListing, entries: ManifestEntry[]) {
	const slugs = new Map(listing.versions.map((version) => [version.id, version.slug]));
	for (let start = 0; start < listing.versions.length; start += BATCH) {
		const ids = listing.versions.slice(start, start + BATCH).map((version) => version.id);
		const versions = await em.find(RelationVersion, { id: { $in: ids } });
		const byId = new Map(versions.map((version) => [version.id, version]));
		for (const id of ids) {
			const version = byId.get(id);
			if (!version) continue;
			const slug = slugs.get(id)!;
			const bytes = encoder.encode(canonicalJson(version.content));
			const path = `relations/${slug}/versions/${version.number}.json`;
			entries.push({
				path,
				kind: 'relation-version',
				ref: `${slug}@${version.number}`,
				format: 'json',
				media_type: 'application/json',
				bytes: bytes.byteLength,
				sha256: encodeHexLowerCase(sha256(bytes)),
				digest: version.digest
			});
			yield { path, bytes, modified: version.createdAt } satisfies ArchiveFile;
		}
		em.clear();
	}
}

async function* calibratorRevisionFiles(em: EntityManager, listing: ArchiveListing, entries: ManifestEntry[]) {
	const listed = new Map(listing.revisions.map((revision) => [revision.id, revision]));
	const ids = [...listed.keys()];
	for (let start = 0; start < ids.length; start += BATCH) {
		const batch = ids.slice(start, start + BATCH);
		const revisions = await em.find(CalibratorRevision, { id: { $in: batch } }, { populate: ['calibratorSet'] });
		const byId = new Map(revisions.map((revision) => [revision.id, revision]));
		for (const id of batch) {
			const revision = byId.get(id);
			if (!revision) continue;
			const set = revision.calibratorSet;
			const content = revisionContent(revision);
			const { title, licence, citations } = listed.get(id)!;
			const publication = { content, title, licence, citations };
			for (const format of REVISION_FORMATS) {
				const bytes = encoder.encode(renderRevision(format, publication));
				const path = `calibrator-sets/${set.slug}/revisions/${revision.number}.${REVISION_FILE_EXTENSIONS[format]}`;
				entries.push({
					path,
					kind: 'calibrator-revision',
					ref: `${set.slug}/revisions/${revision.number}`,
					format,
					media_type: REVISION_MEDIA_TYPES[format],
					bytes: bytes.byteLength,
					sha256: encodeHexLowerCase(sha256(bytes)),
					digest: content.digest
				});
				yield { path, bytes, modified: revision.createdAt } satisfies ArchiveFile;
			}
		}
		em.clear();
	}
}

export const ARCHIVE_README = `Candlebook registry archive
===========================

This archive holds every public, unembargoed frozen version of every public period-luminosity
relation in this Candlebook registry, and every revision of every public calibrator set, as the
registry's read API serves them. It is meant for long-term deposit: each file stands on its own.

  relations/<slug>/versions/<n>.json            a frozen version, byte for byte as served at
                                                /api/v1/pins/<slug>@<n>
  calibrator-sets/<slug>/revisions/<n>.json     a calibrator revision with the set's licence and the
  calibrator-sets/<slug>/revisions/<n>.csv      citations its users must give; the same rows as CSV
  calibrator-sets/<slug>/revisions/<n>.vot      (RFC 4180, header line) and as IVOA VOTable 1.4
  manifest.json                                 every file with its kind, reference and SHA-256

How to verify
-------------
1. Every file: its SHA-256 (lowercase hex) equals "sha256" in manifest.json, e.g.
     sha256sum relations/<slug>/versions/<n>.json
2. A relation version: remove its "digest" member, serialise the rest as RFC 8785 canonical JSON
   (JSON Canonicalization Scheme), take SHA-256 of the UTF-8 bytes; "sha256:" + hex equals "digest".
3. A calibrator revision (JSON file): the same rule applied to its "content" member gives
   content.digest; the CSV and VOTable files name that digest in the manifest and (VOTable) in an
   INFO element called "digest".

Use of the calibrator data is subject to each set's licence (SPDX id in the JSON file and the
VOTable INFO "licence"); cite the works listed under "citations".
`;

/**
 * The archive of exactly `listing` as a stream of zip bytes; pull-driven, so a slow reader slows the
 * database reads too. A title, licence or citation changed after the listing was read would not match
 * the key, so the set's own fields are taken from the listing, not re-read.
 */
export function archiveStream(em: EntityManager, listing: ArchiveListing): ReadableStream<Uint8Array> {
	const entries: ManifestEntry[] = [];
	let newest = new Date(Date.UTC(2026, 0, 1));
	let controllerRef: ReadableStreamDefaultController<Uint8Array> | null = null;
	let emitted = false;
	const zip = new Zip((error, chunk, final) => {
		if (error) return controllerRef?.error(error);
		if (chunk.byteLength) {
			emitted = true;
			controllerRef?.enqueue(chunk);
		}
		if (final) controllerRef?.close();
	});
	const add = (file: ArchiveFile) => {
		const entry = new ZipDeflate(file.path, { level: 6 });
		entry.mtime = dosTime(file.modified);
		zip.add(entry);
		entry.push(file.bytes, true);
	};
	const files = (async function* () {
		yield* relationVersionFiles(em, listing, entries);
		yield* calibratorRevisionFiles(em, listing, entries);
	})();
	let finished = false;
	return new ReadableStream<Uint8Array>({
		start(controller) {
			controllerRef = controller;
		},
		async pull() {
			// A pull that enqueues nothing would never be called again: add files until bytes come out.
			emitted = false;
			while (!emitted && !finished) {
				const next = await files.next();
				if (next.done) break;
				if (next.value.modified > newest) newest = next.value.modified;
				add(next.value);
			}
			if (emitted || finished) return;
			finished = true;
			add({ path: 'README.txt', bytes: encoder.encode(ARCHIVE_README), modified: newest });
			const manifest = {
				archive: 'candlebook-registry',
				manifest_version: 1,
				contents_as_of: newest.toISOString(),
				counts: {
					relation_versions: entries.filter((entry) => entry.kind === 'relation-version').length,
					calibrator_revisions: new Set(
						entries.filter((entry) => entry.kind === 'calibrator-revision').map((entry) => entry.ref)
					).size
				},
				files: entries
			};
			add({ path: 'manifest.json', bytes: encoder.encode(JSON.stringify(manifest, null, 2) + '\n'), modified: newest });
			zip.end();
		},
		cancel() {
			zip.terminate();
			void files.return(undefined);
		}
	});
}
