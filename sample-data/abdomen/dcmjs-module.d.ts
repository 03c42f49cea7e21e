// dcmjs 0.51.1 ships no TypeScript types (STACK.md). This shorthand declaration lets it be
// imported; write-dicom.ts gives the few parts it uses a type of their own.
declare module 'dcmjs';
