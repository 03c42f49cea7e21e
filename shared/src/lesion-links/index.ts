// Links between tumour structures and the lesions of a case's Summary: the measured structures
// and the suggestion (only ever a suggestion; the presenter confirms each link).
export * from './label-geometry';
export * from './lesion-suggestion';
