import { Migration } from '@mikro-orm/migrations';

/** Calibrator sets can be private to their group, like relations; existing sets stay public. */
export class Migration20261201212600 extends Migration {
  override async up(): Promise<void> {
    this.addSql(`alter table "app_calibrator_set" add column "visibility" text check ("visibility" in ('public', 'group')) not null default 'public';`);
  }

  override async down(): Promise<void> {
    this.addSql(`alter table "app_calibrator_set" drop column "visibility";`);
  }
}
