// dcmjs 0.51.1 ships no TypeScript types (DEVELOPERS.md, "Stack notes"). This shorthand
// declaration lets it be imported; write-dicom.ts gives the few parts it uses a type of their own.
declare module 'dcmjs';
