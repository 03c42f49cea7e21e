export * from './units';
export * from './meld';
export * from './child-pugh';
export * from './albi';
export * from './bclc';
export * from './liver-scores';
