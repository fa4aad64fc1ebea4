import { Migration } from '@mikro-orm/migrations';
import { refuseToDropFrozenRows } from './support/frozen-rows';

/**
 * The registry: calibrator sets and their revisions, relations, frozen versions with their lifecycle,
 * proposals and comments, watches, analysis jobs and settings. Frozen versions and calibrator
 * revisions are insert-only: a trigger refuses UPDATE, DELETE and TRUNCATE for every role, the
 * tables' owner included.
 */
export class Migration20261201194348 extends Migration {

  override async up(): Promise<void> {
    this.addSql(`create table "app_setting" ("key" varchar(64) not null, "value" jsonb not null, "updated_at" timestamptz not null, constraint "app_setting_pkey" primary key ("key"));`);

    this.addSql(`create table "app_relation" ("id" uuid not null, "slug" varchar(64) not null, "title" varchar(200) not null, "description" text not null default '', "band" varchar(16) not null, "population" text check ("population" in ('classical_fundamental', 'classical_first_overtone', 'type2_bl_her', 'type2_w_vir', 'type2_rv_tau')) not null, "magnitude_system" text check ("magnitude_system" in ('Vega', 'AB')) not null, "anchor_type" text check ("anchor_type" in ('parallax', 'geometric_host', 'cluster')) not null, "group_id" uuid not null, "visibility" text check ("visibility" in ('public', 'group')) not null default 'public', "required_approvals" int not null default 1, "created_by_id" uuid not null, "created_at" timestamptz not null, constraint "app_relation_pkey" primary key ("id"));`);
    this.addSql(`alter table "app_relation" add constraint "app_relation_slug_unique" unique ("slug");`);
    this.addSql(`create index "app_relation_group_id_index" on "app_relation" ("group_id");`);

    this.addSql(`create table "app_relation_watch" ("id" uuid not null, "relation_id" uuid not null, "user_id" uuid not null, "created_at" timestamptz not null, constraint "app_relation_watch_pkey" primary key ("id"));`);
    this.addSql(`create index "app_relation_watch_user_id_index" on "app_relation_watch" ("user_id");`);
    this.addSql(`alter table "app_relation_watch" add constraint "app_relation_watch_relation_id_user_id_unique" unique ("relation_id", "user_id");`);

    this.addSql(`create table "app_relation_version" ("id" uuid not null, "relation_id" uuid not null, "number" int not null, "digest" varchar(71) not null, "content" jsonb not null, "proposal_id" uuid null, "created_at" timestamptz not null, constraint "app_relation_version_pkey" primary key ("id"));`);
    this.addSql(`alter table "app_relation_version" add constraint "app_relation_version_digest_unique" unique ("digest");`);
    this.addSql(`alter table "app_relation_version" add constraint "app_relation_version_relation_id_number_unique" unique ("relation_id", "number");`);

    this.addSql(`create table "app_calibrator_set" ("id" uuid not null, "slug" varchar(64) not null, "title" varchar(200) not null, "description" text not null default '', "group_id" uuid not null, "licence" varchar(64) not null, "citations" jsonb not null default '[]', "created_by_id" uuid not null, "created_at" timestamptz not null, constraint "app_calibrator_set_pkey" primary key ("id"));`);
    this.addSql(`alter table "app_calibrator_set" add constraint "app_calibrator_set_slug_unique" unique ("slug");`);
    this.addSql(`create index "app_calibrator_set_group_id_index" on "app_calibrator_set" ("group_id");`);

    this.addSql(`create table "app_calibrator_revision" ("id" uuid not null, "calibrator_set_id" uuid not null, "number" int not null, "digest" varchar(71) not null, "source_sha256" varchar(64) not null, "source_key" varchar(300) not null, "source_name" varchar(200) not null, "source_media_type" varchar(100) not null, "source_bytes" int not null, "row_count" int not null, "content" jsonb not null, "note" text not null default '', "uploaded_by_id" uuid not null, "created_at" timestamptz not null, constraint "app_calibrator_revision_pkey" primary key ("id"));`);
    this.addSql(`alter table "app_calibrator_revision" add constraint "app_calibrator_revision_calibrator_set_id_number_unique" unique ("calibrator_set_id", "number");`);

    this.addSql(`create table "app_analysis_job" ("id" uuid not null, "kind" text check ("kind" in ('fit')) not null, "requested_by_id" uuid not null, "state" text check ("state" in ('queued', 'running', 'succeeded', 'failed')) not null default 'queued', "progress" int not null default 0, "stage" varchar(100) not null default 'queued', "input" jsonb not null, "result" jsonb null, "error" jsonb null, "queue_job_id" varchar(64) null, "created_at" timestamptz not null, "started_at" timestamptz null, "finished_at" timestamptz null, constraint "app_analysis_job_pkey" primary key ("id"));`);
    this.addSql(`create index "app_analysis_job_requested_by_id_index" on "app_analysis_job" ("requested_by_id");`);

    this.addSql(`create table "app_proposal" ("id" uuid not null, "relation_id" uuid not null, "author_id" uuid not null, "state" text check ("state" in ('draft', 'in_review', 'changes_requested', 'approved', 'rejected', 'withdrawn')) not null default 'draft', "title" varchar(200) not null, "rationale" text not null default '', "base_version" int null, "fit_id" uuid not null, "calibrator_revision_id" uuid not null, "approvals" text[] not null default '{}', "embargo_until" timestamptz null, "version_number" int null, "created_at" timestamptz not null, "updated_at" timestamptz not null, "submitted_at" timestamptz null, "decided_at" timestamptz null, constraint "app_proposal_pkey" primary key ("id"));`);
    this.addSql(`create index "app_proposal_relation_id_index" on "app_proposal" ("relation_id");`);
    this.addSql(`create index "app_proposal_author_id_index" on "app_proposal" ("author_id");`);

    this.addSql(`create table "app_proposal_comment" ("id" uuid not null, "proposal_id" uuid not null, "author_id" uuid not null, "decision" text check ("decision" in ('approve', 'request_changes', 'reject')) null, "body" text not null default '', "created_at" timestamptz not null, constraint "app_proposal_comment_pkey" primary key ("id"));`);
    this.addSql(`create index "app_proposal_comment_proposal_id_index" on "app_proposal_comment" ("proposal_id");`);

    this.addSql(`create table "app_version_lifecycle" ("id" uuid not null, "relation_id" uuid not null, "number" int not null, "status" text check ("status" in ('current', 'superseded', 'deprecated')) not null, "deprecated_at" timestamptz null, "deprecated_by_id" uuid null, "deprecation_reason" text null, "successor_number" int null, "embargo_until" timestamptz null, "released_at" timestamptz null, "released_by_id" uuid null, "updated_at" timestamptz not null, constraint "app_version_lifecycle_pkey" primary key ("id"));`);
    this.addSql(`alter table "app_version_lifecycle" add constraint "app_version_lifecycle_relation_id_number_unique" unique ("relation_id", "number");`);

    this.addSql(`alter table "app_relation" add constraint "app_relation_group_id_foreign" foreign key ("group_id") references "app_group" ("id") on update cascade on delete restrict;`);
    this.addSql(`alter table "app_relation" add constraint "app_relation_created_by_id_foreign" foreign key ("created_by_id") references "app_user" ("id") on update cascade on delete restrict;`);

    this.addSql(`alter table "app_relation_watch" add constraint "app_relation_watch_relation_id_foreign" foreign key ("relation_id") references "app_relation" ("id") on update cascade on delete cascade;`);
    this.addSql(`alter table "app_relation_watch" add constraint "app_relation_watch_user_id_foreign" foreign key ("user_id") references "app_user" ("id") on update cascade on delete cascade;`);

    this.addSql(`alter table "app_relation_version" add constraint "app_relation_version_relation_id_foreign" foreign key ("relation_id") references "app_relation" ("id") on update restrict on delete restrict;`);

    this.addSql(`alter table "app_calibrator_set" add constraint "app_calibrator_set_group_id_foreign" foreign key ("group_id") references "app_group" ("id") on update cascade on delete restrict;`);
    this.addSql(`alter table "app_calibrator_set" add constraint "app_calibrator_set_created_by_id_foreign" foreign key ("created_by_id") references "app_user" ("id") on update cascade on delete restrict;`);

    this.addSql(`alter table "app_calibrator_revision" add constraint "app_calibrator_revision_calibrator_set_id_foreign" foreign key ("calibrator_set_id") references "app_calibrator_set" ("id") on update cascade on delete restrict;`);
    this.addSql(`alter table "app_calibrator_revision" add constraint "app_calibrator_revision_uploaded_by_id_foreign" foreign key ("uploaded_by_id") references "app_user" ("id") on update cascade on delete restrict;`);

    this.addSql(`alter table "app_analysis_job" add constraint "app_analysis_job_requested_by_id_foreign" foreign key ("requested_by_id") references "app_user" ("id") on update cascade on delete restrict;`);

    this.addSql(`alter table "app_proposal" add constraint "app_proposal_relation_id_foreign" foreign key ("relation_id") references "app_relation" ("id") on update cascade on delete restrict;`);
    this.addSql(`alter table "app_proposal" add constraint "app_proposal_author_id_foreign" foreign key ("author_id") references "app_user" ("id") on update cascade on delete restrict;`);
    this.addSql(`alter table "app_proposal" add constraint "app_proposal_fit_id_foreign" foreign key ("fit_id") references "app_analysis_job" ("id") on update cascade on delete restrict;`);
    this.addSql(`alter table "app_proposal" add constraint "app_proposal_calibrator_revision_id_foreign" foreign key ("calibrator_revision_id") references "app_calibrator_revision" ("id") on update cascade on delete restrict;`);

    this.addSql(`alter table "app_proposal_comment" add constraint "app_proposal_comment_proposal_id_foreign" foreign key ("proposal_id") references "app_proposal" ("id") on update cascade on delete cascade;`);
    this.addSql(`alter table "app_proposal_comment" add constraint "app_proposal_comment_author_id_foreign" foreign key ("author_id") references "app_user" ("id") on update cascade on delete restrict;`);

    this.addSql(`alter table "app_version_lifecycle" add constraint "app_version_lifecycle_relation_id_foreign" foreign key ("relation_id") references "app_relation" ("id") on update cascade on delete restrict;`);
    this.addSql(`alter table "app_version_lifecycle" add constraint "app_version_lifecycle_deprecated_by_id_foreign" foreign key ("deprecated_by_id") references "app_user" ("id") on update cascade on delete set null;`);
    this.addSql(`alter table "app_version_lifecycle" add constraint "app_version_lifecycle_released_by_id_foreign" foreign key ("released_by_id") references "app_user" ("id") on update cascade on delete set null;`);
    // A lifecycle row describes exactly one frozen version (same id).
    this.addSql(`alter table "app_version_lifecycle" add constraint "app_version_lifecycle_id_foreign" foreign key ("id") references "app_relation_version" ("id") on update restrict on delete restrict deferrable initially deferred;`);

    // Row triggers bind every role, owners included (only a superuser can switch them off); TRUNCATE
    // skips row triggers, so a statement trigger refuses it too.
    this.addSql(`create or replace function app_refuse_frozen_change() returns trigger language plpgsql as $$
begin
  raise exception 'rows of % are frozen: % is not allowed', TG_TABLE_NAME, TG_OP
    using errcode = 'P0001', hint = 'Approved content never changes; deprecate a version instead.';
end;
$$;`);
    for (const table of ['app_relation_version', 'app_calibrator_revision']) {
      this.addSql(`create trigger "${table}_no_update_or_delete" before update or delete on "${table}" for each row execute function app_refuse_frozen_change();`);
      this.addSql(`create trigger "${table}_no_truncate" before truncate on "${table}" for each statement execute function app_refuse_frozen_change();`);
    }
  }

  // Drops the registry: refused while any version or calibrator revision exists.
  override async down(): Promise<void> {
    await refuseToDropFrozenRows(this, ['app_relation_version', 'app_calibrator_revision']);
    for (const table of ['app_relation_version', 'app_calibrator_revision']) {
      this.addSql(`drop trigger if exists "${table}_no_update_or_delete" on "${table}";`);
      this.addSql(`drop trigger if exists "${table}_no_truncate" on "${table}";`);
    }
    this.addSql(`drop function if exists app_refuse_frozen_change();`);
    this.addSql(`alter table "app_version_lifecycle" drop constraint "app_version_lifecycle_id_foreign";`);

    this.addSql(`alter table "app_relation_watch" drop constraint "app_relation_watch_relation_id_foreign";`);

    this.addSql(`alter table "app_relation_version" drop constraint "app_relation_version_relation_id_foreign";`);

    this.addSql(`alter table "app_proposal" drop constraint "app_proposal_relation_id_foreign";`);

    this.addSql(`alter table "app_version_lifecycle" drop constraint "app_version_lifecycle_relation_id_foreign";`);

    this.addSql(`alter table "app_calibrator_revision" drop constraint "app_calibrator_revision_calibrator_set_id_foreign";`);

    this.addSql(`alter table "app_proposal" drop constraint "app_proposal_calibrator_revision_id_foreign";`);

    this.addSql(`alter table "app_proposal" drop constraint "app_proposal_fit_id_foreign";`);

    this.addSql(`alter table "app_proposal_comment" drop constraint "app_proposal_comment_proposal_id_foreign";`);

    this.addSql(`drop table if exists "app_setting" cascade;`);

    this.addSql(`drop table if exists "app_relation" cascade;`);

    this.addSql(`drop table if exists "app_relation_watch" cascade;`);

    this.addSql(`drop table if exists "app_relation_version" cascade;`);

    this.addSql(`drop table if exists "app_calibrator_set" cascade;`);

    this.addSql(`drop table if exists "app_calibrator_revision" cascade;`);

    this.addSql(`drop table if exists "app_analysis_job" cascade;`);

    this.addSql(`drop table if exists "app_proposal" cascade;`);

    this.addSql(`drop table if exists "app_proposal_comment" cascade;`);

    this.addSql(`drop table if exists "app_version_lifecycle" cascade;`);
  }

}
