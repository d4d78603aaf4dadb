import { Migration } from '@mikro-orm/migrations';

export class Migration20261202101150 extends Migration {

  override async up(): Promise<void> {
    this.addSql(`create table "saved_view" ("id" serial primary key, "created_at" timestamptz not null, "updated_at" timestamptz not null, "name" varchar(120) not null, "owner_id" int not null, "project_id" int not null, "shared" boolean not null default false, "state" jsonb not null, "version" int not null default 1);`);
    this.addSql(`alter table "saved_view" add constraint "saved_view_owner_id_project_id_name_unique" unique ("owner_id", "project_id", "name");`);

    this.addSql(`alter table "saved_view" add constraint "saved_view_owner_id_foreign" foreign key ("owner_id") references "app_user" ("id") on update cascade;`);
    this.addSql(`alter table "saved_view" add constraint "saved_view_project_id_foreign" foreign key ("project_id") references "project" ("id") on update cascade;`);

    this.addSql(`alter table "project" add column "selectivity_window" double precision not null default 2;`);

    this.addSql(`alter table "compound" add column "rgroup_key" varchar(64) null, add column "rgroups" jsonb null;`);
  }

  override async down(): Promise<void> {
    this.addSql(`drop table if exists "saved_view" cascade;`);

    this.addSql(`alter table "project" drop column "selectivity_window";`);

    this.addSql(`alter table "compound" drop column "rgroup_key", drop column "rgroups";`);
  }

}
