import type { AppConfig, SamlSettings } from '../../config';

/** SAML is configured from the environment; the SSO helper session fills this in. */
export async function samlSettingsFromEnvironment(_config: AppConfig): Promise<SamlSettings | null> {
  return null;
}
