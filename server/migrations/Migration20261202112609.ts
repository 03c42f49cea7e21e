import { Migration } from '@mikro-orm/migrations';

export class Migration20261202112609 extends Migration {

  override async up(): Promise<void> {
    this.addSql(`alter table "image_series" add column "compression" jsonb null;`);
  }

  override async down(): Promise<void> {
    this.addSql(`alter table "image_series" drop column "compression";`);
  }

}
