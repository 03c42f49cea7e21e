import { Migration } from '@mikro-orm/migrations';

export class Migration20261202155708 extends Migration {

  override async up(): Promise<void> {
    this.addSql(`create table "sign_in_failure" ("id" uuid not null, "created_at" timestamptz not null, "updated_at" timestamptz not null, "address" varchar(64) not null, "account" varchar(320) not null, constraint "sign_in_failure_pkey" primary key ("id"));`);
    this.addSql(`create index "sign_in_failure_address_created_at_index" on "sign_in_failure" ("address", "created_at");`);
    this.addSql(`create index "sign_in_failure_account_created_at_index" on "sign_in_failure" ("account", "created_at");`);
  }

  override async down(): Promise<void> {
    this.addSql(`drop table if exists "sign_in_failure" cascade;`);
  }

}
