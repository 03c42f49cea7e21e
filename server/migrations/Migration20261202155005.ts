import { Migration } from '@mikro-orm/migrations';

export class Migration20261202155005 extends Migration {

  override async up(): Promise<void> {
    this.addSql(`create table "key_image" ("id" uuid not null, "created_at" timestamptz not null, "updated_at" timestamptz not null, "clinical_case_id" uuid not null, "series_id" uuid not null, "author_id" uuid not null, "pane" varchar(8) not null, "caption" varchar(200) null, "view_state" jsonb not null, "storage_key" varchar(64) not null, "width_px" int not null, "height_px" int not null, "bytes" int not null, constraint "key_image_pkey" primary key ("id"));`);
    this.addSql(`create index "key_image_clinical_case_id_index" on "key_image" ("clinical_case_id");`);

    this.addSql(`alter table "key_image" add constraint "key_image_clinical_case_id_foreign" foreign key ("clinical_case_id") references "clinical_case" ("id") on update cascade on delete cascade;`);
    this.addSql(`alter table "key_image" add constraint "key_image_series_id_foreign" foreign key ("series_id") references "image_series" ("id") on update cascade on delete cascade;`);
    this.addSql(`alter table "key_image" add constraint "key_image_author_id_foreign" foreign key ("author_id") references "app_user" ("id") on update cascade;`);
  }

  override async down(): Promise<void> {
    this.addSql(`drop table if exists "key_image" cascade;`);
  }

}
