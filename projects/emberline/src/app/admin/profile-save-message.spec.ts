import { profileSaveMessage } from './profile-save-message';

describe('profileSaveMessage', () => {
  it('says a new profile was created', () => {
    expect(profileSaveMessage({ name: 'Demo', version: 1 }, null)).toBe('Demo created.');
  });

  it('says an edit kept the version when the server answers the same version', () => {
    expect(profileSaveMessage({ name: 'Demo', version: 3 }, { version: 3 })).toBe('Demo saved.');
  });

  it('names the new version and the one earlier assessments keep when the server made one', () => {
    expect(profileSaveMessage({ name: 'Demo', version: 4 }, { version: 3 })).toBe(
      'Demo saved as version 4; earlier assessments keep version 3.',
    );
  });
});
