// @ts-check
import js from '@eslint/js';
import tseslint from 'typescript-eslint';
import angular from 'angular-eslint';
import globals from 'globals';

const noFocusedTests = {
  'no-restricted-properties': [
    'error',
    { object: 'describe', property: 'only', message: 'No focused tests.' },
    { object: 'it', property: 'only', message: 'No focused tests.' },
    { object: 'test', property: 'only', message: 'No focused tests.' },
    { object: 'describe', property: 'skip', message: 'No skipped tests.' },
    { object: 'it', property: 'skip', message: 'No skipped tests.' },
    { object: 'test', property: 'skip', message: 'No skipped tests.' },
  ],
};

export default tseslint.config(
  {
    ignores: [
      'node_modules/**',
      'dist/**',
      '.angular/**',
      '.data/**',
      'server/migrations/.snapshot-*.json',
      'test-results/**',
    ],
  },
  {
    files: ['**/*.{js,mjs}'],
    extends: [js.configs.recommended],
    languageOptions: { globals: { ...globals.node } },
  },
  {
    files: ['shared/**/*.ts', 'server/**/*.ts', 'test/**/*.ts', 'sample-data/**/*.ts', '*.ts'],
    extends: [js.configs.recommended, ...tseslint.configs.strict],
    languageOptions: { globals: { ...globals.node } },
    rules: {
      '@typescript-eslint/no-explicit-any': 'error',
      '@typescript-eslint/no-unused-vars': ['error', { argsIgnorePattern: '^_' }],
      ...noFocusedTests,
    },
  },
  {
    files: ['shared/**/*.ts'],
    rules: {
      'no-restricted-imports': [
        'error',
        {
          patterns: [
            {
              group: ['node:*', 'fs', 'path', 'crypto'],
              message: 'shared/ is pure: no Node APIs.',
            },
            {
              group: ['@angular/*', '@mikro-orm/*', 'express', 'rxjs'],
              message: 'shared/ imports no framework.',
            },
            {
              group: ['**/server/**', '**/projects/**'],
              message: 'shared/ imports nothing from server/ or projects/.',
            },
          ],
        },
      ],
    },
  },
  {
    files: ['server/**/*.ts'],
    rules: {
      'no-restricted-imports': [
        'error',
        {
          patterns: [
            {
              group: ['**/projects/**', '@angular/*'],
              message: 'The server imports nothing of the client.',
            },
          ],
        },
      ],
    },
  },
  {
    files: ['projects/**/*.ts'],
    extends: [js.configs.recommended, ...tseslint.configs.strict, ...angular.configs.tsRecommended],
    processor: angular.processInlineTemplates,
    languageOptions: { globals: { ...globals.browser } },
    rules: {
      '@typescript-eslint/no-explicit-any': 'error',
      '@angular-eslint/component-selector': [
        'error',
        { type: 'element', prefix: 'em', style: 'kebab-case' },
      ],
      '@angular-eslint/directive-selector': [
        'error',
        { type: 'attribute', prefix: 'em', style: 'camelCase' },
      ],
      '@angular-eslint/prefer-on-push-component-change-detection': 'error',
      'no-restricted-imports': [
        'error',
        {
          patterns: [
            {
              group: ['**/server/**', 'express', '@mikro-orm/*'],
              message: 'The client imports nothing of the server.',
            },
            {
              group: ['@angular/common'],
              importNames: ['CommonModule', 'NgClass'],
              message: 'Use built-in control flow and class bindings.',
            },
          ],
        },
      ],
      ...noFocusedTests,
    },
  },
  {
    files: ['projects/**/*.html'],
    extends: [...angular.configs.templateRecommended, ...angular.configs.templateAccessibility],
  },
);
