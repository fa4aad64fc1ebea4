import { AnalysisJob } from './analysis-job.entity';
import { CalibratorRevision } from './calibrator-revision.entity';
import { CalibratorSet } from './calibrator-set.entity';
import { HeldMail } from './held-mail.entity';
import { ProposalComment } from './proposal-comment.entity';
import { Proposal } from './proposal.entity';
import { RelationVersion } from './relation-version.entity';
import { RelationWatch } from './relation-watch.entity';
import { Relation } from './relation.entity';
import { Setting } from './setting.entity';
import { VersionLifecycle } from './version-lifecycle.entity';

/** The registry's entities: calibrator sets, relations, versions, proposals, watches, held mail, jobs, settings. */
export const REGISTRY_ENTITIES = [
	CalibratorSet,
	CalibratorRevision,
	Relation,
	RelationVersion,
	VersionLifecycle,
	AnalysisJob,
	Proposal,
	ProposalComment,
	RelationWatch,
	HeldMail,
	Setting
];
