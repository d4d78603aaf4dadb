import { Migration } from '@mikro-orm/migrations';

/** Tables whose changes the pages read (everything but sign-in tokens and import progress). */
const TRACKED = ['audit_event', 'project', 'series', 'project_target', 'target', 'compound', 'batch', 'assay', 'run', 'run_file', 'measurement', 'result', 'comment', 'ligand_call', 'decision', 'saved_view'];

export class Migration20261202132257 extends Migration {

  override async up(): Promise<void> {
    this.addSql(`create table "data_version" ("id" int not null, "value" bigint not null default 0, "changed_at" timestamptz null, constraint "data_version_pkey" primary key ("id"), constraint data_version_one_row check ("id" = 1));`);
    this.addSql(`insert into "data_version" ("id", "value", "changed_at") values (1, 0, now());`);
    // Written by hand: bump the counter once per writing transaction, at commit (deferred), so the
    // row lock is taken last and held only while committing (no deadlock with the writer's other
    // row locks), and readers see the new counter exactly when they see the new data.
    this.addSql(`create function ligandry_bump_data_version() returns trigger language plpgsql as $$
begin
  if coalesce(current_setting('ligandry.data_version_bumped', true), '') is distinct from txid_current()::text then
    update data_version set value = value + 1, changed_at = now() where id = 1;
    perform set_config('ligandry.data_version_bumped', txid_current()::text, true);
  end if;
  return null;
end $$;`);
    for (const table of TRACKED) {
      this.addSql(`create constraint trigger data_version_bump after insert or update or delete on "${table}" deferrable initially deferred for each row execute function ligandry_bump_data_version();`);
      this.addSql(`create trigger data_version_bump_truncate after truncate on "${table}" for each statement execute function ligandry_bump_data_version();`);
    }
    // Users: names and roles show on pages; a sign-in (last_sign_in_at) does not change the data.
    this.addSql(`create constraint trigger data_version_bump after insert or delete or update of "name", "email", "role", "active" on "app_user" deferrable initially deferred for each row execute function ligandry_bump_data_version();`);
    this.addSql(`create trigger data_version_bump_truncate after truncate on "app_user" for each statement execute function ligandry_bump_data_version();`);
  }

  override async down(): Promise<void> {
    for (const table of [...TRACKED, 'app_user']) {
      this.addSql(`drop trigger if exists data_version_bump on "${table}";`);
      this.addSql(`drop trigger if exists data_version_bump_truncate on "${table}";`);
    }
    this.addSql(`drop function if exists ligandry_bump_data_version();`);
    this.addSql(`drop table if exists "data_version" cascade;`);
  }

}
