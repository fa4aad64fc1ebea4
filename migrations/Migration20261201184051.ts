import { Migration } from '@mikro-orm/migrations';

/** Accounts and sessions: the first tables. */
export class Migration20261201184051 extends Migration {

  override async up(): Promise<void> {
    this.addSql(`create table "app_user" ("id" uuid not null, "email" varchar(320) not null, "display_name" varchar(200) not null, "affiliation" varchar(300) null, "orcid" varchar(19) null, "password_hash" text null, "roles" text[] not null default '{reader}', "created_at" timestamptz not null, constraint "app_user_pkey" primary key ("id"));`);
    this.addSql(`alter table "app_user" add constraint "app_user_email_unique" unique ("email");`);

    this.addSql(`create table "app_session" ("id" varchar(64) not null, "user_id" uuid not null, "expires_at" timestamptz not null, "created_at" timestamptz not null, constraint "app_session_pkey" primary key ("id"));`);
    this.addSql(`create index "app_session_expires_at_index" on "app_session" ("expires_at");`);

    this.addSql(`alter table "app_session" add constraint "app_session_user_id_foreign" foreign key ("user_id") references "app_user" ("id") on update cascade on delete cascade;`);
  }

  override async down(): Promise<void> {
    this.addSql(`drop table if exists "app_session" cascade;`);
    this.addSql(`drop table if exists "app_user" cascade;`);
  }

}
