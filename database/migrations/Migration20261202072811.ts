import { Migration } from '@mikro-orm/migrations';

export class Migration20261202072811 extends Migration {

  override async up(): Promise<void> {
    this.addSql(`create table "target" ("id" serial primary key, "created_at" timestamptz not null, "updated_at" timestamptz not null, "name" varchar(120) not null, "gene_symbol" varchar(30) not null, "family" text check ("family" in ('GPCR', 'ion channel', 'nuclear receptor', 'transporter', 'enzyme', 'other')) not null, "species" varchar(60) not null, "description" text null, "version" int not null default 1);`);
    this.addSql(`alter table "target" add constraint "target_gene_symbol_species_unique" unique ("gene_symbol", "species");`);

    this.addSql(`create table "project_target" ("id" serial primary key, "created_at" timestamptz not null, "updated_at" timestamptz not null, "project_id" int not null, "target_id" int not null, "role" text check ("role" in ('primary', 'anti-target')) not null, "agonism_unwanted" boolean not null default false);`);
    this.addSql(`alter table "project_target" add constraint "project_target_project_id_target_id_unique" unique ("project_id", "target_id");`);

    this.addSql(`create table "comment" ("id" serial primary key, "created_at" timestamptz not null, "updated_at" timestamptz not null, "entity_type" varchar(60) not null, "entity_id" varchar(60) not null, "author_id" int not null, "text" text not null);`);
    this.addSql(`create index "comment_entity_type_entity_id_index" on "comment" ("entity_type", "entity_id");`);

    this.addSql(`create table "assay" ("id" serial primary key, "created_at" timestamptz not null, "updated_at" timestamptz not null, "code" varchar(30) not null, "name" varchar(160) not null, "target_id" int not null, "kind" text check ("kind" in ('binding', 'functional-agonist', 'functional-antagonist', 'allosteric-modulation')) not null, "readout" varchar(80) not null, "species" varchar(60) not null, "cell_system" varchar(160) null, "constitutive_activity" boolean not null default false, "radioligand" varchar(120) null, "radioligand_conc_m" double precision null, "radioligand_kd_m" double precision null, "reference_compound_id" int null, "agonist_conc_m" double precision null, "agonist_ec50m" double precision null, "agonist_hill" double precision null, "description" text null, "created_by_id" int not null, "version" int not null default 1);`);
    this.addSql(`alter table "assay" add constraint "assay_code_unique" unique ("code");`);

    this.addSql(`create table "run" ("id" serial primary key, "created_at" timestamptz not null, "updated_at" timestamptz not null, "assay_id" int not null, "run_date" varchar(10) not null, "operator_id" int not null, "format" text check ("format" in ('long', 'plate')) not null, "notes" text null, "normalisation" jsonb not null, "dropped_rows" jsonb null);`);
    this.addSql(`create index "run_assay_id_index" on "run" ("assay_id");`);

    this.addSql(`create table "run_file" ("id" serial primary key, "created_at" timestamptz not null, "updated_at" timestamptz not null, "run_id" int not null, "role" text check ("role" in ('long', 'matrix', 'map')) not null, "file_name" varchar(255) not null, "media_type" varchar(120) not null, "size" int not null, "content" bytea not null);`);

    this.addSql(`create table "measurement" ("id" bigserial primary key, "run_id" int not null, "batch_id" int null, "control" text check ("control" in ('basal', 'max', 'blank')) null, "concentration_m" double precision null, "response" double precision not null, "normalised" double precision null, "replicate" int null, "well" varchar(4) null, "condition" varchar(120) null, "excluded" boolean not null default false, "line" int null);`);
    this.addSql(`create index "measurement_run_id_index" on "measurement" ("run_id");`);
    this.addSql(`create index "measurement_batch_id_index" on "measurement" ("batch_id");`);

    this.addSql(`create table "result" ("id" serial primary key, "created_at" timestamptz not null, "updated_at" timestamptz not null, "assay_id" int not null, "run_id" int null, "batch_id" int not null, "compound_id" int not null, "condition" varchar(120) null, "source" text check ("source" in ('fit', 'manual')) not null, "is_reference" boolean not null default false, "status" text check ("status" in ('draft', 'submitted', 'approved', 'rejected')) not null default 'draft', "values" jsonb not null, "fit" jsonb null, "fixed" jsonb null, "note" text null, "created_by_id" int not null, "submitted_by_id" int null, "submitted_at" timestamptz null, "reviewed_by_id" int null, "reviewed_at" timestamptz null, "review_comment" text null, "version" int not null default 1);`);
    this.addSql(`create index "result_status_index" on "result" ("status");`);
    this.addSql(`create index "result_compound_id_index" on "result" ("compound_id");`);
    this.addSql(`create index "result_run_id_index" on "result" ("run_id");`);
    this.addSql(`create index "result_assay_id_index" on "result" ("assay_id");`);

    this.addSql(`alter table "project_target" add constraint "project_target_project_id_foreign" foreign key ("project_id") references "project" ("id") on update cascade;`);
    this.addSql(`alter table "project_target" add constraint "project_target_target_id_foreign" foreign key ("target_id") references "target" ("id") on update cascade;`);

    this.addSql(`alter table "comment" add constraint "comment_author_id_foreign" foreign key ("author_id") references "app_user" ("id") on update cascade;`);

    this.addSql(`alter table "assay" add constraint "assay_target_id_foreign" foreign key ("target_id") references "target" ("id") on update cascade;`);
    this.addSql(`alter table "assay" add constraint "assay_reference_compound_id_foreign" foreign key ("reference_compound_id") references "compound" ("id") on update cascade on delete set null;`);
    this.addSql(`alter table "assay" add constraint "assay_created_by_id_foreign" foreign key ("created_by_id") references "app_user" ("id") on update cascade;`);

    this.addSql(`alter table "run" add constraint "run_assay_id_foreign" foreign key ("assay_id") references "assay" ("id") on update cascade;`);
    this.addSql(`alter table "run" add constraint "run_operator_id_foreign" foreign key ("operator_id") references "app_user" ("id") on update cascade;`);

    this.addSql(`alter table "run_file" add constraint "run_file_run_id_foreign" foreign key ("run_id") references "run" ("id") on update cascade;`);

    this.addSql(`alter table "measurement" add constraint "measurement_run_id_foreign" foreign key ("run_id") references "run" ("id") on update cascade;`);
    this.addSql(`alter table "measurement" add constraint "measurement_batch_id_foreign" foreign key ("batch_id") references "batch" ("id") on update cascade on delete set null;`);

    this.addSql(`alter table "result" add constraint "result_assay_id_foreign" foreign key ("assay_id") references "assay" ("id") on update cascade;`);
    this.addSql(`alter table "result" add constraint "result_run_id_foreign" foreign key ("run_id") references "run" ("id") on update cascade on delete set null;`);
    this.addSql(`alter table "result" add constraint "result_batch_id_foreign" foreign key ("batch_id") references "batch" ("id") on update cascade;`);
    this.addSql(`alter table "result" add constraint "result_compound_id_foreign" foreign key ("compound_id") references "compound" ("id") on update cascade;`);
    this.addSql(`alter table "result" add constraint "result_created_by_id_foreign" foreign key ("created_by_id") references "app_user" ("id") on update cascade;`);
    this.addSql(`alter table "result" add constraint "result_submitted_by_id_foreign" foreign key ("submitted_by_id") references "app_user" ("id") on update cascade on delete set null;`);
    this.addSql(`alter table "result" add constraint "result_reviewed_by_id_foreign" foreign key ("reviewed_by_id") references "app_user" ("id") on update cascade on delete set null;`);
  }

  override async down(): Promise<void> {
    this.addSql(`alter table "project_target" drop constraint "project_target_target_id_foreign";`);

    this.addSql(`alter table "assay" drop constraint "assay_target_id_foreign";`);

    this.addSql(`alter table "run" drop constraint "run_assay_id_foreign";`);

    this.addSql(`alter table "result" drop constraint "result_assay_id_foreign";`);

    this.addSql(`alter table "run_file" drop constraint "run_file_run_id_foreign";`);

    this.addSql(`alter table "measurement" drop constraint "measurement_run_id_foreign";`);

    this.addSql(`alter table "result" drop constraint "result_run_id_foreign";`);

    this.addSql(`drop table if exists "target" cascade;`);

    this.addSql(`drop table if exists "project_target" cascade;`);

    this.addSql(`drop table if exists "comment" cascade;`);

    this.addSql(`drop table if exists "assay" cascade;`);

    this.addSql(`drop table if exists "run" cascade;`);

    this.addSql(`drop table if exists "run_file" cascade;`);

    this.addSql(`drop table if exists "measurement" cascade;`);

    this.addSql(`drop table if exists "result" cascade;`);
  }

}
