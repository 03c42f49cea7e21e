import { Migration } from '@mikro-orm/migrations';

export class Migration20261201204043 extends Migration {

  override async up(): Promise<void> {
    this.addSql(`create table "structure" ("id" uuid not null, "created_at" timestamptz not null, "updated_at" timestamptz not null, "series_id" uuid not null, "label_value" int not null, "kind" varchar(32) null, "name" varchar(80) not null, "voxel_count" int not null, "volume_ml" double precision not null, "source" varchar(16) not null, constraint "structure_pkey" primary key ("id"));`);
    this.addSql(`create index "structure_series_id_index" on "structure" ("series_id");`);
    this.addSql(`alter table "structure" add constraint "structure_series_id_label_value_unique" unique ("series_id", "label_value");`);

    this.addSql(`create table "label_map" ("id" uuid not null, "created_at" timestamptz not null, "updated_at" timestamptz not null, "series_id" uuid not null, "source" varchar(16) not null, "data_type" varchar(8) not null, "storage_key" varchar(80) not null, "byte_length" int not null, "imported_by_id" uuid not null, constraint "label_map_pkey" primary key ("id"));`);
    this.addSql(`alter table "label_map" add constraint "label_map_series_id_unique" unique ("series_id");`);

    this.addSql(`alter table "structure" add constraint "structure_series_id_foreign" foreign key ("series_id") references "image_series" ("id") on update cascade on delete cascade;`);

    this.addSql(`alter table "label_map" add constraint "label_map_series_id_foreign" foreign key ("series_id") references "image_series" ("id") on update cascade on delete cascade;`);
    this.addSql(`alter table "label_map" add constraint "label_map_imported_by_id_foreign" foreign key ("imported_by_id") references "app_user" ("id") on update cascade;`);
  }

  override async down(): Promise<void> {
    this.addSql(`drop table if exists "structure" cascade;`);

    this.addSql(`drop table if exists "label_map" cascade;`);
  }

}
