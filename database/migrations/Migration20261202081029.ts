import { Migration } from '@mikro-orm/migrations';

export class Migration20261202081029 extends Migration {

  override async up(): Promise<void> {
    this.addSql(`alter table "compound" add column "fingerprint" bit(1024) null, add column "fingerprint_version" smallint null;`);
  }

  override async down(): Promise<void> {
    this.addSql(`alter table "compound" drop column "fingerprint", drop column "fingerprint_version";`);
  }

}
