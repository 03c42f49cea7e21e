import { Migration } from '@mikro-orm/migrations';

export class Migration20261201212955 extends Migration {

  override async up(): Promise<void> {
    this.addSql(`create table "applicator_profile" ("id" uuid not null, "created_at" timestamptz not null, "updated_at" timestamptz not null, "name" varchar(80) not null, "modality" varchar(16) not null, "gauge_g" smallint not null, "working_length_mm" double precision not null, "active_length_mm" double precision not null, "zone_table" jsonb not null, "notes" text null, "is_retired" boolean not null, constraint "applicator_profile_pkey" primary key ("id"));`);
    this.addSql(`alter table "applicator_profile" add constraint "applicator_profile_name_unique" unique ("name");`);

    this.addSql(`create table "safety_profile" ("id" uuid not null, "created_at" timestamptz not null, "updated_at" timestamptz not null, "name" varchar(80) not null, "structure_rules" jsonb not null, "margin_target_mm" double precision not null, "margin_target_source" text not null, "margin_minimum_mm" double precision not null, "margin_minimum_source" text not null, "heat_sink_diameter_mm" double precision not null, "heat_sink_distance_mm" double precision not null, "heat_sink_kinds" jsonb not null, "heat_sink_source" text not null, "maximum_angulation_deg" double precision not null, "angulation_source" text not null, "minimum_parenchyma_before_tumour_mm" double precision not null, "parenchyma_source" text not null, "maximum_capsule_crossings" smallint not null, "capsule_source" text not null, "is_default" boolean not null, constraint "safety_profile_pkey" primary key ("id"));`);
    this.addSql(`alter table "safety_profile" add constraint "safety_profile_name_unique" unique ("name");`);
    this.addSql(`create unique index "safety_profile_single_default" on "safety_profile" ("is_default") where "is_default";`);

    this.addSql(`create table "needle_plan" ("id" uuid not null, "created_at" timestamptz not null, "updated_at" timestamptz not null, "clinical_case_id" uuid not null, "series_id" uuid not null, "author_id" uuid not null, "name" varchar(80) not null, "status" varchar(24) not null, "applicators" jsonb not null, "notes" text null, constraint "needle_plan_pkey" primary key ("id"));`);
    this.addSql(`create index "needle_plan_clinical_case_id_index" on "needle_plan" ("clinical_case_id");`);
    this.addSql(`create index "needle_plan_series_id_index" on "needle_plan" ("series_id");`);

    this.addSql(`create table "assessment" ("id" uuid not null, "created_at" timestamptz not null, "updated_at" timestamptz not null, "plan_id" uuid not null, "status" varchar(16) not null, "progress" double precision not null, "inputs_hash" text not null, "engine_version" text not null, "result" jsonb null, "error" text null, "attempts" int not null default 0, "job_id" text null, "requested_by_id" uuid not null, "safety_profile_id" uuid not null, constraint "assessment_pkey" primary key ("id"));`);
    this.addSql(`create index "assessment_plan_id_index" on "assessment" ("plan_id");`);
    this.addSql(`create index "assessment_inputs_hash_index" on "assessment" ("inputs_hash");`);

    this.addSql(`alter table "needle_plan" add constraint "needle_plan_clinical_case_id_foreign" foreign key ("clinical_case_id") references "clinical_case" ("id") on update cascade on delete cascade;`);
    this.addSql(`alter table "needle_plan" add constraint "needle_plan_series_id_foreign" foreign key ("series_id") references "image_series" ("id") on update cascade on delete cascade;`);
    this.addSql(`alter table "needle_plan" add constraint "needle_plan_author_id_foreign" foreign key ("author_id") references "app_user" ("id") on update cascade;`);

    this.addSql(`alter table "assessment" add constraint "assessment_plan_id_foreign" foreign key ("plan_id") references "needle_plan" ("id") on update cascade on delete cascade;`);
    this.addSql(`alter table "assessment" add constraint "assessment_requested_by_id_foreign" foreign key ("requested_by_id") references "app_user" ("id") on update cascade;`);
    this.addSql(`alter table "assessment" add constraint "assessment_safety_profile_id_foreign" foreign key ("safety_profile_id") references "safety_profile" ("id") on update cascade;`);
  }

  override async down(): Promise<void> {
    this.addSql(`alter table "assessment" drop constraint "assessment_safety_profile_id_foreign";`);

    this.addSql(`alter table "assessment" drop constraint "assessment_plan_id_foreign";`);

    this.addSql(`drop table if exists "applicator_profile" cascade;`);

    this.addSql(`drop table if exists "safety_profile" cascade;`);

    this.addSql(`drop table if exists "needle_plan" cascade;`);

    this.addSql(`drop table if exists "assessment" cascade;`);
  }

}
