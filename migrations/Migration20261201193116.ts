import { Migration } from '@mikro-orm/migrations';

/** Audit event kinds become a plain string, so a new kind of event needs no migration. */
export class Migration20261201193116 extends Migration {

  override async up(): Promise<void> {
    this.addSql(`alter table "app_audit_event" drop constraint if exists "app_audit_event_kind_check";`);

    this.addSql(`alter table "app_audit_event" alter column "kind" type varchar(64) using ("kind"::varchar(64));`);
  }

  // Fails if events of kinds added after the check constraint exist; delete or rename them first.
  override async down(): Promise<void> {
    this.addSql(`alter table "app_audit_event" alter column "kind" type text using ("kind"::text);`);
    this.addSql(`alter table "app_audit_event" add constraint "app_audit_event_kind_check" check("kind" in ('sign-in', 'sign-in-failed', 'sign-in-throttled', 'sign-out', 'sign-out-everywhere', 'invitation-sent', 'invitation-accepted', 'password-reset-requested', 'password-reset', 'password-set', 'email-change-requested', 'email-changed', 'user-created', 'roles-changed', 'group-created', 'group-member-added', 'group-member-removed', 'token-created', 'token-revoked'));`);
  }

}
