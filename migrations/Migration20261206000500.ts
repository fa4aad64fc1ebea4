import { Migration } from '@mikro-orm/migrations';

/**
 * The star search finds revisions by an index instead of unpacking every revision's rows per request:
 * each revision's star names and cross ids, lower-cased, as a text[] under a GIN index (revisions are
 * insert-only, so the index never goes stale). A hit's versions are found by an index on the
 * calibrator revision their frozen content names. Frozen content is read, never rewritten. The key
 * function is declared costly (it unpacks every row), so the planner reads the index rather than
 * computing keys for each revision.
 */
export class Migration20261206000500 extends Migration {

  override async up(): Promise<void> {
    this.addSql(`create or replace function app_calibrator_star_keys(content jsonb) returns text[]
      language sql immutable strict parallel safe cost 1000 as $$
        select coalesce(array_agg(distinct key), '{}') from (
          select lower(item->>'star') as key from jsonb_array_elements(content->'rows') as item
          union all
          select lower(item->'values'->>'cross_id') from jsonb_array_elements(content->'rows') as item
        ) keys where key is not null
      $$;`);
    this.addSql(`create index "app_calibrator_revision_star_keys_index" on "app_calibrator_revision" using gin (app_calibrator_star_keys("content"));`);
    this.addSql(`create index "app_relation_version_calibrator_revision_index" on "app_relation_version" (("content"->'calibrator_set'->>'slug'), (cast("content"->'calibrator_set'->>'revision' as int)));`);
  }

  override async down(): Promise<void> {
    this.addSql(`drop index if exists "app_relation_version_calibrator_revision_index";`);
    this.addSql(`drop index if exists "app_calibrator_revision_star_keys_index";`);
    this.addSql(`drop function if exists app_calibrator_star_keys(jsonb);`);
  }

}
