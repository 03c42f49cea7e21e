import { Migration } from '@mikro-orm/migrations';

export class Migration20261202051905 extends Migration {

  override async up(): Promise<void> {
    this.addSql(`create table "minutes" ("id" uuid not null, "created_at" timestamptz not null, "updated_at" timestamptz not null, "meeting_id" uuid not null, "content" text not null, "sha256" varchar(64) not null, "frozen_at" timestamptz not null, constraint "minutes_pkey" primary key ("id"));`);
    this.addSql(`alter table "minutes" add constraint "minutes_meeting_id_unique" unique ("meeting_id");`);

    this.addSql(`create table "attendance" ("id" uuid not null, "created_at" timestamptz not null, "updated_at" timestamptz not null, "meeting_id" uuid not null, "user_id" uuid not null, "specialty" varchar(40) null, "via" varchar(8) not null, "joined_at" timestamptz not null, "left_at" timestamptz null, constraint "attendance_pkey" primary key ("id"));`);
    this.addSql(`create index "attendance_meeting_id_user_id_index" on "attendance" ("meeting_id", "user_id");`);

    this.addSql(`create table "annotation" ("id" uuid not null, "created_at" timestamptz not null, "updated_at" timestamptz not null, "clinical_case_id" uuid not null, "series_id" uuid not null, "author_id" uuid not null, "meeting_id" uuid null, "kind" varchar(8) not null, "points" jsonb not null, "text" text null, constraint "annotation_pkey" primary key ("id"));`);
    this.addSql(`create index "annotation_clinical_case_id_index" on "annotation" ("clinical_case_id");`);

    this.addSql(`create table "item_comment" ("id" uuid not null, "created_at" timestamptz not null, "updated_at" timestamptz not null, "agenda_item_id" uuid not null, "parent_id" uuid null, "author_id" uuid not null, "body" text not null, "is_for_minutes" boolean not null, constraint "item_comment_pkey" primary key ("id"));`);
    this.addSql(`create index "item_comment_agenda_item_id_index" on "item_comment" ("agenda_item_id");`);

    this.addSql(`create table "decision" ("id" uuid not null, "created_at" timestamptz not null, "updated_at" timestamptz not null, "clinical_case_id" uuid not null, "agenda_item_id" uuid null, "outcome" varchar(24) not null, "selected_plan_id" uuid null, "rationale" text not null, "conditions" text null, "signer_id" uuid not null, "signed_at" timestamptz not null, "sign_in_method" varchar(8) not null, "quorum" jsonb not null, "quorum_override_reason" text null, constraint "decision_pkey" primary key ("id"));`);
    this.addSql(`alter table "decision" add constraint "decision_clinical_case_id_unique" unique ("clinical_case_id");`);

    this.addSql(`create table "decision_amendment" ("id" uuid not null, "created_at" timestamptz not null, "updated_at" timestamptz not null, "decision_id" uuid not null, "reason" text not null, "text" text not null, "signer_id" uuid not null, "signed_at" timestamptz not null, constraint "decision_amendment_pkey" primary key ("id"));`);

    this.addSql(`create table "vote" ("id" uuid not null, "created_at" timestamptz not null, "updated_at" timestamptz not null, "agenda_item_id" uuid not null, "voter_id" uuid not null, "option" varchar(40) not null, "position" varchar(8) not null, "comment" text null, constraint "vote_pkey" primary key ("id"));`);
    this.addSql(`alter table "vote" add constraint "vote_agenda_item_id_voter_id_option_unique" unique ("agenda_item_id", "voter_id", "option");`);

    this.addSql(`alter table "minutes" add constraint "minutes_meeting_id_foreign" foreign key ("meeting_id") references "meeting" ("id") on update cascade on delete cascade;`);

    this.addSql(`alter table "attendance" add constraint "attendance_meeting_id_foreign" foreign key ("meeting_id") references "meeting" ("id") on update cascade on delete cascade;`);
    this.addSql(`alter table "attendance" add constraint "attendance_user_id_foreign" foreign key ("user_id") references "app_user" ("id") on update cascade;`);

    this.addSql(`alter table "annotation" add constraint "annotation_clinical_case_id_foreign" foreign key ("clinical_case_id") references "clinical_case" ("id") on update cascade on delete cascade;`);
    this.addSql(`alter table "annotation" add constraint "annotation_series_id_foreign" foreign key ("series_id") references "image_series" ("id") on update cascade on delete cascade;`);
    this.addSql(`alter table "annotation" add constraint "annotation_author_id_foreign" foreign key ("author_id") references "app_user" ("id") on update cascade;`);
    this.addSql(`alter table "annotation" add constraint "annotation_meeting_id_foreign" foreign key ("meeting_id") references "meeting" ("id") on update cascade on delete set null;`);

    this.addSql(`alter table "item_comment" add constraint "item_comment_agenda_item_id_foreign" foreign key ("agenda_item_id") references "agenda_item" ("id") on update cascade on delete cascade;`);
    this.addSql(`alter table "item_comment" add constraint "item_comment_parent_id_foreign" foreign key ("parent_id") references "item_comment" ("id") on update cascade on delete cascade;`);
    this.addSql(`alter table "item_comment" add constraint "item_comment_author_id_foreign" foreign key ("author_id") references "app_user" ("id") on update cascade;`);

    this.addSql(`alter table "decision" add constraint "decision_clinical_case_id_foreign" foreign key ("clinical_case_id") references "clinical_case" ("id") on update cascade on delete cascade;`);
    this.addSql(`alter table "decision" add constraint "decision_agenda_item_id_foreign" foreign key ("agenda_item_id") references "agenda_item" ("id") on update cascade on delete set null;`);
    this.addSql(`alter table "decision" add constraint "decision_selected_plan_id_foreign" foreign key ("selected_plan_id") references "needle_plan" ("id") on update cascade on delete restrict;`);
    this.addSql(`alter table "decision" add constraint "decision_signer_id_foreign" foreign key ("signer_id") references "app_user" ("id") on update cascade;`);

    this.addSql(`alter table "decision_amendment" add constraint "decision_amendment_decision_id_foreign" foreign key ("decision_id") references "decision" ("id") on update cascade on delete cascade;`);
    this.addSql(`alter table "decision_amendment" add constraint "decision_amendment_signer_id_foreign" foreign key ("signer_id") references "app_user" ("id") on update cascade;`);

    this.addSql(`alter table "vote" add constraint "vote_agenda_item_id_foreign" foreign key ("agenda_item_id") references "agenda_item" ("id") on update cascade on delete cascade;`);
    this.addSql(`alter table "vote" add constraint "vote_voter_id_foreign" foreign key ("voter_id") references "app_user" ("id") on update cascade;`);

    this.addSql(`alter table "meeting" add column "lead_id" uuid null, add column "view_state" jsonb null, add column "view_sequence" int not null default 0, add column "opened_at" timestamptz null, add column "closed_at" timestamptz null, add column "closed_by_id" uuid null;`);
    this.addSql(`alter table "meeting" add constraint "meeting_lead_id_foreign" foreign key ("lead_id") references "app_user" ("id") on update cascade on delete set null;`);
    this.addSql(`alter table "meeting" add constraint "meeting_closed_by_id_foreign" foreign key ("closed_by_id") references "app_user" ("id") on update cascade on delete set null;`);

    this.addSql(`alter table "agenda_item" drop constraint "agenda_item_clinical_case_id_unique";`);

    this.addSql(`alter table "agenda_item" add column "closed_at" timestamptz null;`);
    this.addSql(`create index "agenda_item_clinical_case_id_index" on "agenda_item" ("clinical_case_id");`);
    this.addSql(`create unique index "agenda_item_one_open_per_case" on "agenda_item" ("clinical_case_id") where "closed_at" is null;`);
  }

  override async down(): Promise<void> {
    this.addSql(`alter table "item_comment" drop constraint "item_comment_parent_id_foreign";`);

    this.addSql(`alter table "decision_amendment" drop constraint "decision_amendment_decision_id_foreign";`);

    this.addSql(`drop table if exists "minutes" cascade;`);

    this.addSql(`drop table if exists "attendance" cascade;`);

    this.addSql(`drop table if exists "annotation" cascade;`);

    this.addSql(`drop table if exists "item_comment" cascade;`);

    this.addSql(`drop table if exists "decision" cascade;`);

    this.addSql(`drop table if exists "decision_amendment" cascade;`);

    this.addSql(`drop table if exists "vote" cascade;`);

    this.addSql(`alter table "meeting" drop constraint "meeting_lead_id_foreign";`);
    this.addSql(`alter table "meeting" drop constraint "meeting_closed_by_id_foreign";`);

    this.addSql(`drop index "agenda_item_clinical_case_id_index";`);
    this.addSql(`alter table "agenda_item" drop constraint "agenda_item_one_open_per_case";`);
    this.addSql(`alter table "agenda_item" drop column "closed_at";`);

    this.addSql(`alter table "agenda_item" add constraint "agenda_item_clinical_case_id_unique" unique ("clinical_case_id");`);

    this.addSql(`alter table "meeting" drop column "lead_id", drop column "view_state", drop column "view_sequence", drop column "opened_at", drop column "closed_at", drop column "closed_by_id";`);
  }

}
