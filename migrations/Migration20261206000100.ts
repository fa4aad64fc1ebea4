import { Migration } from '@mikro-orm/migrations';

/**
 * Two rules about who may see what. Mail about an embargoed version is held for watchers outside the
 * owning group until the embargo ends (`app_held_mail`). And a calibrator set's visibility can only
 * widen: a relation built on a public set stays reproducible by everyone who can read it, so the
 * database refuses turning a public set group-private, whatever code asks for it.
 */
export class Migration20261206000100 extends Migration {

  override async up(): Promise<void> {
    this.addSql(`create table "app_held_mail" ("id" uuid not null, "lifecycle_id" uuid not null, "recipient_id" uuid not null, "subject" text not null, "text" text not null, "held_at" timestamptz not null, "sent_at" timestamptz null, constraint "app_held_mail_pkey" primary key ("id"));`);
    this.addSql(`create index "app_held_mail_lifecycle_id_index" on "app_held_mail" ("lifecycle_id");`);
    this.addSql(`alter table "app_held_mail" add constraint "app_held_mail_lifecycle_id_foreign" foreign key ("lifecycle_id") references "app_version_lifecycle" ("id") on update cascade on delete cascade;`);
    this.addSql(`alter table "app_held_mail" add constraint "app_held_mail_recipient_id_foreign" foreign key ("recipient_id") references "app_user" ("id") on update cascade on delete cascade;`);

    this.addSql(`create or replace function app_refuse_narrowing_set_visibility() returns trigger language plpgsql as $$
begin
  if old.visibility = 'public' and new.visibility <> 'public' then
    raise exception 'calibrator set % is public: its visibility can only widen', old.slug
      using errcode = 'P0001', hint = 'Relations built on a public set must stay reproducible; publish a new set instead.';
  end if;
  return new;
end;
$$;`);
    this.addSql(`create trigger "app_calibrator_set_visibility_only_widens" before update of "visibility" on "app_calibrator_set" for each row execute function app_refuse_narrowing_set_visibility();`);
  }

  override async down(): Promise<void> {
    this.addSql(`drop trigger if exists "app_calibrator_set_visibility_only_widens" on "app_calibrator_set";`);
    this.addSql(`drop function if exists app_refuse_narrowing_set_visibility();`);
    this.addSql(`drop table if exists "app_held_mail";`);
  }

}
