import { newProgressToken } from './progress-token';

/**
 * RFC 9562 §5.4 (UUID version 4), from memory [M]: 8-4-4-4-12 lower-case hex digits, the
 * version nibble (first of the third group) 4, the variant bits (top two of the fourth group) 10.
 */
const uuidV4 = /^[0-9a-f]{8}-[0-9a-f]{4}-4[0-9a-f]{3}-[89ab][0-9a-f]{3}-[0-9a-f]{12}$/;

describe('newProgressToken', () => {
  afterEach(() => vi.restoreAllMocks());

  it('makes version 4 UUIDs, different each time', () => {
    const tokens = Array.from({ length: 200 }, newProgressToken);
    for (const token of tokens) expect(token).toMatch(uuidV4);
    expect(new Set(tokens).size).toBe(tokens.length);
  });

  it('sets the version and variant bits whatever the random bytes', () => {
    // [C] from the bit layout of RFC 9562 §4.1 and §4.2: octet 6 = 0100xxxx, octet 8 = 10xxxxxx.
    const fill = (value: number) =>
      vi
        .spyOn(crypto, 'getRandomValues')
        .mockImplementationOnce(<T extends ArrayBufferView | null>(array: T): T => {
          if (array instanceof Uint8Array) array.fill(value);
          return array;
        });
    fill(0xff);
    expect(newProgressToken()).toBe('ffffffff-ffff-4fff-bfff-ffffffffffff');
    fill(0x00);
    expect(newProgressToken()).toBe('00000000-0000-4000-8000-000000000000');
  });
});
