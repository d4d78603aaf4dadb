import { Migration } from '@mikro-orm/migrations';

export class Migration20261202000332 extends Migration {

  override async up(): Promise<void> {
    this.addSql(`create table "project" ("id" serial primary key, "created_at" timestamptz not null, "updated_at" timestamptz not null, "code" varchar(20) not null, "name" varchar(120) not null, "description" text null);`);
    this.addSql(`alter table "project" add constraint "project_code_unique" unique ("code");`);

    this.addSql(`create table "registry_counter" ("name" varchar(40) not null, "value" int not null default 0, constraint "registry_counter_pkey" primary key ("name"));`);

    this.addSql(`create table "series" ("id" serial primary key, "created_at" timestamptz not null, "updated_at" timestamptz not null, "project_id" int not null, "code" varchar(20) not null, "name" varchar(120) not null, "description" text null, "core" text null);`);
    this.addSql(`alter table "series" add constraint "series_project_id_code_unique" unique ("project_id", "code");`);

    this.addSql(`create table "import_job" ("id" serial primary key, "created_at" timestamptz not null, "updated_at" timestamptz not null, "format" text check ("format" in ('sdf', 'csv')) not null, "file_name" varchar(255) not null, "content" text not null, "options" jsonb not null, "status" text check ("status" in ('queued', 'running', 'done', 'failed')) not null, "total" int not null default 0, "processed" int not null default 0, "created" int not null default 0, "duplicates" int not null default 0, "errors" int not null default 0, "report" jsonb not null, "failure" text null, "user_id" int not null, "finished_at" timestamptz null);`);

    this.addSql(`create table "compound" ("id" serial primary key, "created_at" timestamptz not null, "updated_at" timestamptz not null, "number" int not null, "registry_number" varchar(32) not null, "id_code" text not null, "no_stereo_id_code" text not null, "tautomer_id_code" text null, "smiles" text not null, "molfile" text not null, "name" varchar(200) null, "aliases" text[] not null default '{}', "formula" varchar(120) not null, "mw" double precision not null, "monoisotopic_mass" double precision not null, "clogp" double precision not null, "tpsa" double precision not null, "hbd" int not null, "hba" int not null, "rotatable_bonds" int not null, "heavy_atoms" int not null, "stereo_centres" int not null, "stereo_status" text check ("stereo_status" in ('achiral', 'defined', 'undefined', 'partial')) not null, "series_id" int null, "registrant_id" int not null, "batch_count" int not null default 0, "version" int not null default 1);`);
    this.addSql(`alter table "compound" add constraint "compound_number_unique" unique ("number");`);
    this.addSql(`alter table "compound" add constraint "compound_registry_number_unique" unique ("registry_number");`);
    this.addSql(`alter table "compound" add constraint "compound_id_code_unique" unique ("id_code");`);
    this.addSql(`create index "compound_no_stereo_id_code_index" on "compound" ("no_stereo_id_code");`);
    this.addSql(`create index "compound_tautomer_id_code_index" on "compound" ("tautomer_id_code");`);
    this.addSql(`create index "compound_series_id_index" on "compound" ("series_id");`);
    this.addSql(`create index "compound_registrant_id_index" on "compound" ("registrant_id");`);

    this.addSql(`create table "batch" ("id" serial primary key, "created_at" timestamptz not null, "updated_at" timestamptz not null, "compound_id" int not null, "sequence" int not null, "batch_number" varchar(40) not null, "salt_label" varchar(200) not null, "salt_components" jsonb not null, "batch_formula" varchar(200) not null, "formula_weight" double precision not null, "submitted_structure" text not null, "purity" double precision null, "amount_mg" double precision null, "source" varchar(200) null, "notebook_ref" varchar(100) null, "registrant_id" int not null);`);
    this.addSql(`alter table "batch" add constraint "batch_batch_number_unique" unique ("batch_number");`);
    this.addSql(`alter table "batch" add constraint "batch_compound_id_sequence_unique" unique ("compound_id", "sequence");`);

    this.addSql(`alter table "series" add constraint "series_project_id_foreign" foreign key ("project_id") references "project" ("id") on update cascade;`);

    this.addSql(`alter table "import_job" add constraint "import_job_user_id_foreign" foreign key ("user_id") references "app_user" ("id") on update cascade;`);

    this.addSql(`alter table "compound" add constraint "compound_series_id_foreign" foreign key ("series_id") references "series" ("id") on update cascade on delete set null;`);
    this.addSql(`alter table "compound" add constraint "compound_registrant_id_foreign" foreign key ("registrant_id") references "app_user" ("id") on update cascade;`);

    this.addSql(`alter table "batch" add constraint "batch_compound_id_foreign" foreign key ("compound_id") references "compound" ("id") on update cascade;`);
    this.addSql(`alter table "batch" add constraint "batch_registrant_id_foreign" foreign key ("registrant_id") references "app_user" ("id") on update cascade;`);
  }

  override async down(): Promise<void> {
    this.addSql(`alter table "series" drop constraint "series_project_id_foreign";`);

    this.addSql(`alter table "compound" drop constraint "compound_series_id_foreign";`);

    this.addSql(`alter table "batch" drop constraint "batch_compound_id_foreign";`);

    this.addSql(`drop table if exists "project" cascade;`);

    this.addSql(`drop table if exists "registry_counter" cascade;`);

    this.addSql(`drop table if exists "series" cascade;`);

    this.addSql(`drop table if exists "import_job" cascade;`);

    this.addSql(`drop table if exists "compound" cascade;`);

    this.addSql(`drop table if exists "batch" cascade;`);
  }

}
