import { Migration } from '@mikro-orm/migrations';
import { refuseToDropFrozenRows } from './support/frozen-rows';

/**
 * Calibrator revisions may take values from light-curve analyses: each such value is recorded, insert-only,
 * against the analysis it came from. An analysis a revision relies on can no longer be deleted, and no
 * analysis is ever updated.
 */
export class Migration20261202001000 extends Migration {

  override async up(): Promise<void> {
    this.addSql(`create table "app_calibrator_value_source" ("id" uuid not null, "revision_id" uuid not null, "star" text not null, "field" varchar(60) not null, "value" double precision not null, "light_curve_result_id" uuid not null, "quantity" varchar(40) not null, constraint "app_calibrator_value_source_pkey" primary key ("id"));`);
    this.addSql(`create index "app_calibrator_value_source_light_curve_result_id_index" on "app_calibrator_value_source" ("light_curve_result_id");`);
    this.addSql(`alter table "app_calibrator_value_source" add constraint "app_calibrator_value_source_revision_id_star_field_unique" unique ("revision_id", "star", "field");`);

    this.addSql(`alter table "app_calibrator_value_source" add constraint "app_calibrator_value_source_revision_id_foreign" foreign key ("revision_id") references "app_calibrator_revision" ("id") on update cascade on delete restrict;`);
    this.addSql(`alter table "app_calibrator_value_source" add constraint "app_calibrator_value_source_light_curve_result_id_foreign" foreign key ("light_curve_result_id") references "app_light_curve_result" ("id") on update cascade on delete restrict;`);

    // Same guard as frozen versions and revisions (app_refuse_frozen_change, Migration20261201194348).
    this.addSql(`create trigger "app_calibrator_value_source_no_update_or_delete" before update or delete on "app_calibrator_value_source" for each row execute function app_refuse_frozen_change();`);
    this.addSql(`create trigger "app_calibrator_value_source_no_truncate" before truncate on "app_calibrator_value_source" for each statement execute function app_refuse_frozen_change();`);
    // Analyses are written once; deleting one no revision relies on stays possible.
    this.addSql(`create trigger "app_light_curve_result_no_update" before update on "app_light_curve_result" for each row execute function app_refuse_frozen_change();`);
  }

  // Drops the record of which analysis gave which revision value: refused while any such record exists.
  override async down(): Promise<void> {
    await refuseToDropFrozenRows(this, ['app_calibrator_value_source']);
    this.addSql(`drop trigger if exists "app_light_curve_result_no_update" on "app_light_curve_result";`);
    this.addSql(`drop table if exists "app_calibrator_value_source";`);
  }

}
