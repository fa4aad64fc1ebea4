import { Migration } from '@mikro-orm/migrations';

/** Light-curve uploads and their per-star, per-band analyses; analysis jobs may analyse light curves. */
export class Migration20261201212000 extends Migration {

  override async up(): Promise<void> {
    this.addSql(`alter table "app_analysis_job" drop constraint if exists "app_analysis_job_kind_check";`);
    this.addSql(`alter table "app_analysis_job" add constraint "app_analysis_job_kind_check" check ("kind" in ('fit', 'light_curves'));`);

    this.addSql(`create table "app_light_curve_upload" ("id" uuid not null, "uploaded_by_id" uuid not null, "source_sha256" varchar(64) not null, "source_key" varchar(300) not null, "source_name" varchar(200) not null, "source_media_type" varchar(100) not null, "source_bytes" int not null, "time_reference" text check ("time_reference" in ('HJD', 'BJD_TDB', 'JD', 'MJD')) not null, "time_offset_days" double precision not null, "column_mapping" jsonb not null, "file_star" varchar(100) null, "file_band" varchar(20) null, "population" varchar(40) not null, "min_period_days" double precision null, "max_period_days" double precision null, "series" jsonb not null, "star_count" int not null, "analysis_job_id" uuid null, "created_at" timestamptz not null, constraint "app_light_curve_upload_pkey" primary key ("id"));`);
    this.addSql(`create index "app_light_curve_upload_uploaded_by_id_index" on "app_light_curve_upload" ("uploaded_by_id");`);

    this.addSql(`create table "app_light_curve_result" ("id" uuid not null, "upload_id" uuid not null, "position" int not null, "star" varchar(100) not null, "band" varchar(20) null, "population" varchar(40) not null, "time_frame" varchar(10) not null, "n_points" int not null, "baseline_days" double precision not null, "period_days" double precision not null, "period_err_days" double precision not null, "false_alarm_probability" double precision not null, "peak_power" double precision not null, "amplitude" double precision not null, "epoch_of_maximum" double precision not null, "mean_mag_intensity" double precision not null, "mean_mag_intensity_err" double precision not null, "mean_mag_magnitude" double precision not null, "mean_mag_magnitude_err" double precision not null, "fourier_order" int not null, "fourier_coefficients" jsonb not null, "fourier_shape" jsonb not null, "reduced_chi_square" double precision null, "residual_rms" double precision not null, "periodogram_method" varchar(10) not null, "phase_coverage" jsonb not null, "aliases" jsonb not null, "warnings" jsonb not null, "periodogram" jsonb not null, "engine_version" varchar(40) not null, "created_at" timestamptz not null, constraint "app_light_curve_result_pkey" primary key ("id"));`);
    this.addSql(`create index "app_light_curve_result_upload_id_index" on "app_light_curve_result" ("upload_id");`);

    this.addSql(`alter table "app_light_curve_upload" add constraint "app_light_curve_upload_uploaded_by_id_foreign" foreign key ("uploaded_by_id") references "app_user" ("id") on update cascade on delete restrict;`);
    this.addSql(`alter table "app_light_curve_upload" add constraint "app_light_curve_upload_analysis_job_id_foreign" foreign key ("analysis_job_id") references "app_analysis_job" ("id") on update cascade on delete restrict;`);
    this.addSql(`alter table "app_light_curve_result" add constraint "app_light_curve_result_upload_id_foreign" foreign key ("upload_id") references "app_light_curve_upload" ("id") on update cascade on delete cascade;`);
  }

  // Fails while light-curve jobs exist; delete them first.
  override async down(): Promise<void> {
    this.addSql(`drop table if exists "app_light_curve_result" cascade;`);
    this.addSql(`drop table if exists "app_light_curve_upload" cascade;`);
    this.addSql(`alter table "app_analysis_job" drop constraint if exists "app_analysis_job_kind_check";`);
    this.addSql(`alter table "app_analysis_job" add constraint "app_analysis_job_kind_check" check ("kind" in ('fit'));`);
  }

}
