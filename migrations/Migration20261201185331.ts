import { Migration } from '@mikro-orm/migrations';

/** Groups and memberships, API tokens, single-use e-mail links, the audit log; session details. */
export class Migration20261201185331 extends Migration {

  override async up(): Promise<void> {
    this.addSql(`create table "app_audit_event" ("id" bigserial primary key, "kind" text check ("kind" in ('sign-in', 'sign-in-failed', 'sign-in-throttled', 'sign-out', 'sign-out-everywhere', 'invitation-sent', 'invitation-accepted', 'password-reset-requested', 'password-reset', 'password-set', 'email-change-requested', 'email-changed', 'user-created', 'roles-changed', 'group-created', 'group-member-added', 'group-member-removed', 'token-created', 'token-revoked')) not null, "occurred_at" timestamptz not null, "actor_id" uuid null, "subject" varchar(320) null, "client_address" varchar(64) null, "detail" jsonb not null default '{}');`);
    this.addSql(`create index "app_audit_event_kind_index" on "app_audit_event" ("kind");`);
    this.addSql(`create index "app_audit_event_occurred_at_index" on "app_audit_event" ("occurred_at");`);

    this.addSql(`create table "app_group" ("id" uuid not null, "slug" varchar(64) not null, "name" varchar(200) not null, "description" text null, "created_at" timestamptz not null, constraint "app_group_pkey" primary key ("id"));`);
    this.addSql(`alter table "app_group" add constraint "app_group_slug_unique" unique ("slug");`);

    this.addSql(`create table "app_one_time_link" ("id" varchar(64) not null, "purpose" text check ("purpose" in ('invitation', 'password-reset', 'email-change')) not null, "user_id" uuid not null, "email" varchar(320) not null, "expires_at" timestamptz not null, "used_at" timestamptz null, "created_at" timestamptz not null, constraint "app_one_time_link_pkey" primary key ("id"));`);
    this.addSql(`create index "app_one_time_link_user_id_index" on "app_one_time_link" ("user_id");`);

    this.addSql(`create table "app_group_membership" ("id" uuid not null, "group_id" uuid not null, "user_id" uuid not null, "standing" text check ("standing" in ('member', 'manager')) not null default 'member', "created_at" timestamptz not null, constraint "app_group_membership_pkey" primary key ("id"));`);
    this.addSql(`create index "app_group_membership_user_id_index" on "app_group_membership" ("user_id");`);
    this.addSql(`alter table "app_group_membership" add constraint "app_group_membership_group_id_user_id_unique" unique ("group_id", "user_id");`);

    this.addSql(`create table "app_api_token" ("id" uuid not null, "user_id" uuid not null, "name" varchar(100) not null, "secret_hash" varchar(64) not null, "hint" varchar(16) not null, "scopes" text[] not null default '{}', "expires_at" timestamptz null, "last_used_at" timestamptz null, "revoked_at" timestamptz null, "created_at" timestamptz not null, constraint "app_api_token_pkey" primary key ("id"));`);
    this.addSql(`create index "app_api_token_user_id_index" on "app_api_token" ("user_id");`);
    this.addSql(`alter table "app_api_token" add constraint "app_api_token_secret_hash_unique" unique ("secret_hash");`);

    this.addSql(`alter table "app_one_time_link" add constraint "app_one_time_link_user_id_foreign" foreign key ("user_id") references "app_user" ("id") on update cascade on delete cascade;`);

    this.addSql(`alter table "app_group_membership" add constraint "app_group_membership_group_id_foreign" foreign key ("group_id") references "app_group" ("id") on update cascade on delete cascade;`);
    this.addSql(`alter table "app_group_membership" add constraint "app_group_membership_user_id_foreign" foreign key ("user_id") references "app_user" ("id") on update cascade on delete cascade;`);

    this.addSql(`alter table "app_api_token" add constraint "app_api_token_user_id_foreign" foreign key ("user_id") references "app_user" ("id") on update cascade on delete cascade;`);

    this.addSql(`alter table "app_user" add column "activated_at" timestamptz null, add column "suspended_at" timestamptz null;`);
    // Accounts that already have a password were set up before invitations existed.
    this.addSql(`update "app_user" set "activated_at" = "created_at" where "password_hash" is not null;`);

    this.addSql(`alter table "app_session" add column "user_agent" varchar(300) null, add column "client_address" varchar(64) null;`);
  }

  override async down(): Promise<void> {
    this.addSql(`drop table if exists "app_audit_event" cascade;`);

    this.addSql(`drop table if exists "app_group" cascade;`);

    this.addSql(`drop table if exists "app_one_time_link" cascade;`);

    this.addSql(`drop table if exists "app_group_membership" cascade;`);

    this.addSql(`drop table if exists "app_api_token" cascade;`);

    this.addSql(`alter table "app_session" drop column "user_agent", drop column "client_address";`);

    this.addSql(`alter table "app_user" drop column "activated_at", drop column "suspended_at";`);
  }

}
