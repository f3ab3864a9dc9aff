// Places on disk that the tests and the bench both use.
import { mkdtempSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { fileURLToPath } from 'node:url';

export const projectRoot = fileURLToPath(new URL('..', import.meta.url));

/** A fresh temporary folder. */
export const tempDir = (prefix = 'seamscout-test-'): string => mkdtempSync(join(tmpdir(), prefix));

/** A file of the reference data in test/fixtures/external (its sources in SOURCES.md there). */
export const externalFixture = (name: string): string => join(projectRoot, 'test/fixtures/external', name);
