import { Migration } from '@mikro-orm/migrations';

export class Migration20261202123622 extends Migration {

  override async up(): Promise<void> {
    this.addSql(`create table "mail_delivery" ("id" uuid not null, "created_at" timestamptz not null, "updated_at" timestamptz not null, "subject" varchar(200) not null, "recipients" text[] not null, "state" varchar(10) not null, "attempts" int not null, "last_error_code" varchar(40) null, "sent_at" timestamptz null, "reference" varchar(120) null, constraint "mail_delivery_pkey" primary key ("id"));`);
    this.addSql(`create index "mail_delivery_reference_index" on "mail_delivery" ("reference");`);
  }

  override async down(): Promise<void> {
    this.addSql(`drop table if exists "mail_delivery" cascade;`);
  }

}
