import { Migration } from '@mikro-orm/migrations';

export class Migration20261201194416 extends Migration {

  override async up(): Promise<void> {
    this.addSql(`create table "uid_replacement" ("id" uuid not null, "created_at" timestamptz not null, "updated_at" timestamptz not null, "clinical_case_id" uuid not null, "original_hash" varchar(64) not null, "replacement_uid" varchar(64) not null, constraint "uid_replacement_pkey" primary key ("id"));`);
    this.addSql(`alter table "uid_replacement" add constraint "uid_replacement_clinical_case_id_original_hash_unique" unique ("clinical_case_id", "original_hash");`);

    this.addSql(`create table "image_series" ("id" uuid not null, "created_at" timestamptz not null, "updated_at" timestamptz not null, "clinical_case_id" uuid not null, "modality" varchar(2) not null, "dimensions" jsonb not null, "spacing_mm" jsonb not null, "origin_lps" jsonb not null, "direction" jsonb not null, "slice_count" int not null, "value_unit" varchar(16) not null, "rescale_applied" jsonb not null, "value_min" int not null, "value_max" int not null, "window_centre" double precision not null, "window_width" double precision not null, "series_number" int null, "series_uid" varchar(64) not null, "study_uid" varchar(64) not null, "frame_of_reference_uid" varchar(64) not null, "storage_key" varchar(80) not null, "byte_length" int not null, "dicom_header" jsonb not null, "deidentification" jsonb not null, "uploaded_by_id" uuid not null, constraint "image_series_pkey" primary key ("id"));`);
    this.addSql(`create index "image_series_clinical_case_id_index" on "image_series" ("clinical_case_id");`);
    this.addSql(`alter table "image_series" add constraint "image_series_clinical_case_id_series_uid_unique" unique ("clinical_case_id", "series_uid");`);

    this.addSql(`alter table "uid_replacement" add constraint "uid_replacement_clinical_case_id_foreign" foreign key ("clinical_case_id") references "clinical_case" ("id") on update cascade on delete cascade;`);

    this.addSql(`alter table "image_series" add constraint "image_series_clinical_case_id_foreign" foreign key ("clinical_case_id") references "clinical_case" ("id") on update cascade on delete cascade;`);
    this.addSql(`alter table "image_series" add constraint "image_series_uploaded_by_id_foreign" foreign key ("uploaded_by_id") references "app_user" ("id") on update cascade;`);
  }

  override async down(): Promise<void> {
    this.addSql(`drop table if exists "uid_replacement" cascade;`);

    this.addSql(`drop table if exists "image_series" cascade;`);
  }

}
