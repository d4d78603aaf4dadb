import { Migration } from '@mikro-orm/migrations';

export class Migration20261202110340 extends Migration {

  override async up(): Promise<void> {
    this.addSql(`create table "account_token" ("id" serial primary key, "created_at" timestamptz not null, "user_id" int not null, "purpose" text check ("purpose" in ('invitation', 'password-reset')) not null, "token_hash" varchar(64) not null, "expires_at" timestamptz not null, "used_at" timestamptz null, "created_by_id" int null);`);
    this.addSql(`alter table "account_token" add constraint "account_token_token_hash_unique" unique ("token_hash");`);
    this.addSql(`create index "account_token_user_id_purpose_index" on "account_token" ("user_id", "purpose");`);

    this.addSql(`alter table "account_token" add constraint "account_token_user_id_foreign" foreign key ("user_id") references "app_user" ("id") on update cascade;`);

    this.addSql(`alter table "app_user" add column "invited_at" timestamptz null, add column "password_changed_at" timestamptz null;`);
  }

  override async down(): Promise<void> {
    this.addSql(`drop table if exists "account_token" cascade;`);

    this.addSql(`alter table "app_user" drop column "invited_at", drop column "password_changed_at";`);
  }

}
