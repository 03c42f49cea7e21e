const units = ['bytes', 'kB', 'MB', 'GB'] as const;

/** A byte count in decimal units for people to read: "512 bytes", "3.4 MB". */
export function byteSize(bytes: number): string {
  let value = bytes;
  let unit = 0;
  while (value >= 1000 && unit < units.length - 1) {
    value /= 1000;
    unit++;
  }
  const digits = unit === 0 ? 0 : 1;
  return `${new Intl.NumberFormat('en', { maximumFractionDigits: digits }).format(value)} ${units[unit]}`;
}
