import { Migration } from '@mikro-orm/migrations';

export class Migration20261202114412 extends Migration {

  override async up(): Promise<void> {
    this.addSql(`alter table "target" add column "retired_at" timestamptz null;`);

    this.addSql(`alter table "assay" add column "retired_at" timestamptz null;`);
  }

  override async down(): Promise<void> {
    this.addSql(`alter table "target" drop column "retired_at";`);

    this.addSql(`alter table "assay" drop column "retired_at";`);
  }

}
