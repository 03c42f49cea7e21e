import * as samlifyModule from 'samlify';

/**
 * samlify, loaded the same under tsx and under Vitest. It is CommonJS marked `__esModule` with
 * no default export: Node's ESM loader hands over `module.exports` as the default, while Vite's
 * interop honours the marker and leaves the default undefined. Take whichever is there.
 */
const loaded = (samlifyModule as { default?: typeof samlifyModule }).default ?? samlifyModule;

// Only in the fake: samlify refuses to parse without an XML schema validator, and the requests it
// reads here come from our own service provider. The product never uses samlify.
loaded.setSchemaValidator({ validate: async () => 'skipped' });

export const samlify = loaded;
