import js from '@eslint/js';
import prettier from 'eslint-config-prettier';
import svelte from 'eslint-plugin-svelte';
import globals from 'globals';
import ts from 'typescript-eslint';
import svelteConfig from './svelte.config.js';

/** Modules that would tie the pure core to a framework, the database or the DOM. */
const FRAMEWORK_IMPORTS = {
	paths: [
		{ name: 'svelte', message: 'The calibration and review cores are framework-free.' },
		{ name: 'jsdom', message: 'The cores run without a DOM.' }
	],
	patterns: [
		{ group: ['@sveltejs/*', '$app/*', '$env/*', 'svelte/*'], message: 'The cores are framework-free.' },
		{ group: ['@mikro-orm/*', 'pg', 'pg-*'], message: 'The cores never touch the database.' },
		{ group: ['$lib/server/*', '**/server/*', 'node:*'], message: 'The cores run in the browser too.' }
	]
};

export default ts.config(
	{ ignores: ['build/', '.svelte-kit/', 'node_modules/', '.state/', 'test-results/', 'playwright-report/'] },
	js.configs.recommended,
	...ts.configs.recommended,
	...svelte.configs.recommended,
	prettier,
	...svelte.configs.prettier,
	{
		languageOptions: { globals: { ...globals.browser, ...globals.node } },
		rules: {
			'@typescript-eslint/no-unused-vars': ['error', { argsIgnorePattern: '^_', varsIgnorePattern: '^_' }],
			// TypeScript already reports undefined names, and knows the ambient types that ESLint does not.
			'no-undef': 'off'
		}
	},
	{
		files: ['**/*.svelte', '**/*.svelte.ts', '**/*.svelte.js'],
		languageOptions: {
			parserOptions: { projectService: true, extraFileExtensions: ['.svelte'], parser: ts.parser, svelteConfig }
		}
	},
	{
		files: ['src/lib/calibration/**/*.ts', 'src/lib/review/**/*.ts', 'src/lib/publishing/**/*.ts'],
		ignores: ['**/*.test.ts'],
		rules: { 'no-restricted-imports': ['error', FRAMEWORK_IMPORTS] }
	}
);
