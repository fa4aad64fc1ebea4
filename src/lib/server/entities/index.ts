import { ApiToken } from './api-token.entity';
import { AuditEvent } from './audit-event.entity';
import { CalibratorValueSource } from './calibrator-value-source.entity';
import { GroupMembership } from './group-membership.entity';
import { LightCurveResult } from './light-curve-result.entity';
import { LightCurveUpload } from './light-curve-upload.entity';
import { Group } from './group.entity';
import { OneTimeLink } from './one-time-link.entity';
import { REGISTRY_ENTITIES } from './registry-entities';
import { Session } from './session.entity';
import { ThrottleAttempt } from './throttle-attempt.entity';
import { User } from './user.entity';

/** Every entity, listed explicitly (no globs: the CLI, scripts and Vite must see the same list). */
export const ENTITIES = [
	User,
	Session,
	Group,
	GroupMembership,
	ApiToken,
	OneTimeLink,
	AuditEvent,
	ThrottleAttempt,
	...REGISTRY_ENTITIES,
	LightCurveUpload,
	LightCurveResult,
	CalibratorValueSource
];

export { ApiToken, AuditEvent, Group, GroupMembership, OneTimeLink, Session, ThrottleAttempt, User };
export { ROLES } from './user.entity';
export { TOKEN_SCOPES } from './api-token.entity';
export { GROUP_STANDINGS } from './group-membership.entity';
export type { SessionEntity } from './session.entity';
export type { Role, UserEntity } from './user.entity';
export type { GroupEntity } from './group.entity';
export type { GroupMembershipEntity, GroupStanding } from './group-membership.entity';
export type { ApiTokenEntity, TokenScope } from './api-token.entity';
export type { OneTimeLinkEntity, LinkPurpose } from './one-time-link.entity';
export type { AuditEventEntity, AuditKind } from './audit-event.entity';
export { AnalysisJob } from './analysis-job.entity';
export { CalibratorRevision } from './calibrator-revision.entity';
export { CalibratorSet } from './calibrator-set.entity';
export { CalibratorValueSource } from './calibrator-value-source.entity';
export { Proposal } from './proposal.entity';
export { ProposalComment } from './proposal-comment.entity';
export { Relation } from './relation.entity';
export { RelationVersion } from './relation-version.entity';
export { RelationWatch } from './relation-watch.entity';
export { Setting } from './setting.entity';
export { VersionLifecycle } from './version-lifecycle.entity';
export { LightCurveResult } from './light-curve-result.entity';
export { LightCurveUpload } from './light-curve-upload.entity';
