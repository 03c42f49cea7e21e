import { Migration } from '@mikro-orm/migrations';

export class Migration20261202154925 extends Migration {

  override async up(): Promise<void> {
    this.addSql(`alter table "lab_panel" add column "retirement" varchar(16) null, add column "superseded_by_id" uuid null, add column "retired_reason" text null, add column "retired_by_id" uuid null, add column "retired_at" timestamptz null;`);
    this.addSql(`alter table "lab_panel" add constraint "lab_panel_superseded_by_id_foreign" foreign key ("superseded_by_id") references "lab_panel" ("id") on update cascade on delete set null;`);
    this.addSql(`alter table "lab_panel" add constraint "lab_panel_retired_by_id_foreign" foreign key ("retired_by_id") references "app_user" ("id") on update cascade on delete set null;`);
  }

  override async down(): Promise<void> {
    this.addSql(`alter table "lab_panel" drop constraint "lab_panel_superseded_by_id_foreign";`);
    this.addSql(`alter table "lab_panel" drop constraint "lab_panel_retired_by_id_foreign";`);

    this.addSql(`alter table "lab_panel" drop column "retirement", drop column "superseded_by_id", drop column "retired_reason", drop column "retired_by_id", drop column "retired_at";`);
  }

}
