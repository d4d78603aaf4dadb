import { Migration } from '@mikro-orm/migrations';

export class Migration20261202102820 extends Migration {

  override async up(): Promise<void> {
    this.addSql(`create table "ligand_call" ("id" serial primary key, "created_at" timestamptz not null, "updated_at" timestamptz not null, "compound_id" int not null, "target_id" int not null, "call" varchar(40) not null, "source" text check ("source" in ('rule', 'manual')) not null, "computed_call" varchar(40) not null, "rule" text not null, "evidence" jsonb not null, "conflicts" jsonb null, "computed_at" timestamptz not null, "override_reason" text null, "overridden_by_id" int null, "overridden_at" timestamptz null, "contradicted" boolean not null default false, "version" int not null default 1);`);
    this.addSql(`create index "ligand_call_target_id_index" on "ligand_call" ("target_id");`);
    this.addSql(`alter table "ligand_call" add constraint "ligand_call_compound_id_target_id_unique" unique ("compound_id", "target_id");`);

    this.addSql(`alter table "ligand_call" add constraint "ligand_call_compound_id_foreign" foreign key ("compound_id") references "compound" ("id") on update cascade;`);
    this.addSql(`alter table "ligand_call" add constraint "ligand_call_target_id_foreign" foreign key ("target_id") references "target" ("id") on update cascade;`);
    this.addSql(`alter table "ligand_call" add constraint "ligand_call_overridden_by_id_foreign" foreign key ("overridden_by_id") references "app_user" ("id") on update cascade on delete set null;`);

    this.addSql(`alter table "assay" add column "call_thresholds" jsonb null;`);

    this.addSql(`alter table "result" add column "analysis" jsonb null;`);
  }

  override async down(): Promise<void> {
    this.addSql(`drop table if exists "ligand_call" cascade;`);

    this.addSql(`alter table "assay" drop column "call_thresholds";`);

    this.addSql(`alter table "result" drop column "analysis";`);
  }

}
