import { Migration } from '@mikro-orm/migrations';

export class Migration20261202040414 extends Migration {

  override async up(): Promise<void> {
    this.addSql(`create table "meeting" ("id" uuid not null, "created_at" timestamptz not null, "updated_at" timestamptz not null, "board_id" uuid not null, "starts_at" timestamptz not null, "duration_min" smallint not null, "chair_id" uuid not null, "place" varchar(300) null, "state" varchar(16) not null, "scheduled_by_id" uuid not null, constraint "meeting_pkey" primary key ("id"));`);
    this.addSql(`create index "meeting_board_id_index" on "meeting" ("board_id");`);
    this.addSql(`create index "meeting_starts_at_index" on "meeting" ("starts_at");`);

    this.addSql(`create table "agenda_item" ("id" uuid not null, "created_at" timestamptz not null, "updated_at" timestamptz not null, "meeting_id" uuid not null, "clinical_case_id" uuid not null, "position" smallint not null, "added_by_id" uuid not null, constraint "agenda_item_pkey" primary key ("id"));`);
    this.addSql(`alter table "agenda_item" add constraint "agenda_item_clinical_case_id_unique" unique ("clinical_case_id");`);

    this.addSql(`alter table "meeting" add constraint "meeting_board_id_foreign" foreign key ("board_id") references "board" ("id") on update cascade;`);
    this.addSql(`alter table "meeting" add constraint "meeting_chair_id_foreign" foreign key ("chair_id") references "app_user" ("id") on update cascade;`);
    this.addSql(`alter table "meeting" add constraint "meeting_scheduled_by_id_foreign" foreign key ("scheduled_by_id") references "app_user" ("id") on update cascade;`);

    this.addSql(`alter table "agenda_item" add constraint "agenda_item_meeting_id_foreign" foreign key ("meeting_id") references "meeting" ("id") on update cascade on delete cascade;`);
    this.addSql(`alter table "agenda_item" add constraint "agenda_item_clinical_case_id_foreign" foreign key ("clinical_case_id") references "clinical_case" ("id") on update cascade on delete cascade;`);
    this.addSql(`alter table "agenda_item" add constraint "agenda_item_added_by_id_foreign" foreign key ("added_by_id") references "app_user" ("id") on update cascade;`);

    this.addSql(`alter table "board" add column "required_specialties" jsonb not null default '[]';`);
  }

  override async down(): Promise<void> {
    this.addSql(`alter table "agenda_item" drop constraint "agenda_item_meeting_id_foreign";`);

    this.addSql(`drop table if exists "meeting" cascade;`);

    this.addSql(`drop table if exists "agenda_item" cascade;`);

    this.addSql(`alter table "board" drop column "required_specialties";`);
  }

}
