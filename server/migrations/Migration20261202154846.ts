import { Migration } from '@mikro-orm/migrations';

export class Migration20261202154846 extends Migration {

  override async up(): Promise<void> {
    this.addSql(`alter table "app_user" add column "totp_last_step" int null;`);
  }

  override async down(): Promise<void> {
    this.addSql(`alter table "app_user" drop column "totp_last_step";`);
  }

}
