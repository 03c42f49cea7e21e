import { Migration } from '@mikro-orm/migrations';

export class Migration20261202022148 extends Migration {

  override async up(): Promise<void> {
    this.addSql(`create table "applicator_profile_version" ("id" uuid not null, "created_at" timestamptz not null, "updated_at" timestamptz not null, "profile_id" uuid not null, "version" int not null, "name" varchar(80) not null, "modality" varchar(16) not null, "gauge_g" smallint not null, "working_length_mm" double precision not null, "active_length_mm" double precision not null, "zone_table" jsonb not null, "zone_table_source" varchar(16) not null, "zone_table_reference" varchar(300) null, "calibration" jsonb null, constraint "applicator_profile_version_pkey" primary key ("id"));`);
    this.addSql(`alter table "applicator_profile_version" add constraint "applicator_profile_version_profile_id_version_unique" unique ("profile_id", "version");`);

    this.addSql(`create table "safety_profile_version" ("id" uuid not null, "created_at" timestamptz not null, "updated_at" timestamptz not null, "profile_id" uuid not null, "version" int not null, "body" jsonb not null, constraint "safety_profile_version_pkey" primary key ("id"));`);
    this.addSql(`alter table "safety_profile_version" add constraint "safety_profile_version_profile_id_version_unique" unique ("profile_id", "version");`);

    this.addSql(`alter table "applicator_profile_version" add constraint "applicator_profile_version_profile_id_foreign" foreign key ("profile_id") references "applicator_profile" ("id") on update cascade;`);

    this.addSql(`alter table "safety_profile_version" add constraint "safety_profile_version_profile_id_foreign" foreign key ("profile_id") references "safety_profile" ("id") on update cascade;`);

    this.addSql(`alter table "applicator_profile" add column "zone_table_source" varchar(16) not null default 'manufacturer', add column "zone_table_reference" varchar(300) null, add column "version" int not null default 1;`);
    // Profiles written before sources were kept: say so, for an administrator to correct.
    this.addSql(`update "applicator_profile" set "zone_table_reference" = 'Source not recorded when the profile was created; check it.' where "zone_table_reference" is null;`);
    this.addSql(`alter table "applicator_profile" alter column "zone_table_source" drop default;`);

    this.addSql(`alter table "safety_profile" add column "physics_tolerance_mm" double precision not null default 2, add column "physics_tolerance_source" text not null default 'Default of 2 mm set when the tolerance was introduced; review it.', add column "version" int not null default 1;`);
    this.addSql(`alter table "safety_profile" alter column "physics_tolerance_source" drop default;`);

    this.addSql(`alter table "structure" add column "lesion_id" uuid null, add column "is_lesion_confirmed" boolean not null default false;`);
    this.addSql(`alter table "structure" add constraint "structure_lesion_id_foreign" foreign key ("lesion_id") references "lesion" ("id") on update cascade on delete set null;`);

    // Assessments stored before snapshots were kept have none (null): they are shown as such, and
    // one still active then is failed with a reason, since it cannot run on frozen inputs.
    this.addSql(`alter table "assessment" add column "snapshot" jsonb null;`);
    this.addSql(`update "assessment" set "status" = 'failed', "error" = 'Requested before inputs were frozen with each assessment; request it again.' where "status" in ('queued', 'running');`);
    this.addSql(`create unique index "assessment_one_active" on "assessment" ("plan_id", "inputs_hash") where "status" in ('queued', 'running');`);
  }

  override async down(): Promise<void> {
    this.addSql(`drop table if exists "applicator_profile_version" cascade;`);

    this.addSql(`drop table if exists "safety_profile_version" cascade;`);

    this.addSql(`alter table "structure" drop constraint "structure_lesion_id_foreign";`);

    this.addSql(`alter table "applicator_profile" drop column "zone_table_source", drop column "zone_table_reference", drop column "version";`);

    this.addSql(`alter table "assessment" drop constraint "assessment_one_active";`);
    this.addSql(`alter table "assessment" drop column "snapshot";`);

    this.addSql(`alter table "safety_profile" drop column "physics_tolerance_mm", drop column "physics_tolerance_source", drop column "version";`);

    this.addSql(`alter table "structure" drop column "lesion_id", drop column "is_lesion_confirmed";`);
  }

}
