import { Migration } from '@mikro-orm/migrations';

export class Migration20261202134419 extends Migration {

  override async up(): Promise<void> {
    this.addSql(`create index "compound_screen_index" on "compound" ("number") include ("id", "fingerprint_version", "fingerprint", "id_code");`);
  }

  override async down(): Promise<void> {
    this.addSql(`drop index "compound_screen_index";`);
  }

}
