import { Migration } from '@mikro-orm/migrations';

export class Migration20261201233925 extends Migration {

  override async up(): Promise<void> {
    this.addSql(`create table "audit_event" ("id" bigserial primary key, "at" timestamptz not null, "actor_id" int null, "action" varchar(80) not null, "entity_type" varchar(60) not null, "entity_id" varchar(60) not null, "data" jsonb null);`);
    this.addSql(`create index "audit_event_entity_type_entity_id_index" on "audit_event" ("entity_type", "entity_id");`);

    this.addSql(`create table "app_user" ("id" serial primary key, "created_at" timestamptz not null, "updated_at" timestamptz not null, "email" varchar(254) not null, "name" varchar(120) not null, "role" text check ("role" in ('admin', 'chemist', 'pharmacologist', 'lead', 'viewer')) not null, "password_hash" varchar(255) not null, "active" boolean not null default true, "token_version" int not null default 0, "last_sign_in_at" timestamptz null, "version" int not null default 1, constraint app_user_email_lower check (email = lower(email)));`);
    this.addSql(`alter table "app_user" add constraint "app_user_email_unique" unique ("email");`);
  }

}
