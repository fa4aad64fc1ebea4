/** Audit event kinds of the registry: every state change of sets, relations, proposals and versions. */
export const REGISTRY_AUDIT_KINDS = [
	'calibrator-set-created',
	'calibrator-set-published',
	'calibrator-revision-uploaded',
	'relation-created',
	'relation-watched',
	'relation-unwatched',
	'proposal-created',
	'proposal-edited',
	'proposal-submitted',
	'proposal-commented',
	'proposal-changes-requested',
	'proposal-approval-recorded',
	'proposal-approved',
	'proposal-rejected',
	'proposal-withdrawn',
	'proposal-rebased',
	'version-frozen',
	'version-deprecated',
	'version-released',
	'setting-changed'
] as const;
export type RegistryAuditKind = (typeof REGISTRY_AUDIT_KINDS)[number];
