/**
 * A random UUID, version 4 (RFC 9562 §5.4), that names the server's progress of one upload or
 * keep. Built from `crypto.getRandomValues` rather than `crypto.randomUUID`, which browsers
 * offer only in secure contexts: a hospital may serve Emberline over plain HTTP inside its
 * network.
 */
export function newProgressToken(): string {
  const bytes = crypto.getRandomValues(new Uint8Array(16));
  // Version 4 in the high nibble of octet 6, variant 10 in the high bits of octet 8.
  bytes[6] = (bytes[6] & 0x0f) | 0x40;
  bytes[8] = (bytes[8] & 0x3f) | 0x80;
  const hex = Array.from(bytes, (byte) => byte.toString(16).padStart(2, '0')).join('');
  return [
    hex.slice(0, 8),
    hex.slice(8, 12),
    hex.slice(12, 16),
    hex.slice(16, 20),
    hex.slice(20),
  ].join('-');
}
