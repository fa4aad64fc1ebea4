import { Migration } from '@mikro-orm/migrations';

/**
 * Sign-in and password-reset attempts are counted in the database rather than in each process's memory,
 * so that every app instance shares one count and checking plus recording an attempt is one locked step.
 */
export class Migration20261206000400 extends Migration {

  override async up(): Promise<void> {
    this.addSql(`create table "app_throttle_attempt" ("id" bigserial primary key, "key" varchar(400) not null, "attempted_at" timestamptz not null);`);
    this.addSql(`create index "app_throttle_attempt_key_attempted_at_index" on "app_throttle_attempt" ("key", "attempted_at");`);
  }

  // Only recent attempts live here; dropping them forgets at most one throttle window.
  override async down(): Promise<void> {
    this.addSql(`drop table if exists "app_throttle_attempt";`);
  }

}
