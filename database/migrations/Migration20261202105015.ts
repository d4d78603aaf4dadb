import { Migration } from '@mikro-orm/migrations';

export class Migration20261202105015 extends Migration {

  override async up(): Promise<void> {
    this.addSql(`create table "decision" ("id" serial primary key, "created_at" timestamptz not null, "updated_at" timestamptz not null, "project_id" int not null, "compound_id" int not null, "decision" text check ("decision" in ('progress', 'hold', 'stop')) not null, "rationale" text not null, "author_id" int not null, "snapshot" jsonb not null, "flagged_reason" text null, "flagged_at" timestamptz null, "current" boolean not null default true);`);
    this.addSql(`create index "decision_project_id_compound_id_index" on "decision" ("project_id", "compound_id");`);

    this.addSql(`alter table "decision" add constraint "decision_project_id_foreign" foreign key ("project_id") references "project" ("id") on update cascade;`);
    this.addSql(`alter table "decision" add constraint "decision_compound_id_foreign" foreign key ("compound_id") references "compound" ("id") on update cascade;`);
    this.addSql(`alter table "decision" add constraint "decision_author_id_foreign" foreign key ("author_id") references "app_user" ("id") on update cascade;`);

    this.addSql(`alter table "project" add column "ranking" jsonb null;`);
  }

  override async down(): Promise<void> {
    this.addSql(`drop table if exists "decision" cascade;`);

    this.addSql(`alter table "project" drop column "ranking";`);
  }

}
