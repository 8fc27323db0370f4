/** Validation of result files handed to `subgauge report` (zod), with errors that name the field. */
import { InvalidInputError } from '@subgauge/core';
import type { z } from 'zod';
import { RESULT_SCHEMAS, type ResultDocument } from './results.js';

export * from './results.js';

/** `curve[3].signalAdu` from a zod issue path. */
export function fieldPath(path: readonly PropertyKey[]): string {
  let out = '';
  for (const p of path) {
    if (typeof p === 'number') out += `[${p}]`;
    else out += out ? `.${String(p)}` : String(p);
  }
  return out || '(document)';
}

function describe(value: unknown): string {
  if (value === null) return 'null';
  if (Array.isArray(value)) return 'an array';
  return typeof value === 'string' ? JSON.stringify(value.length > 60 ? `${value.slice(0, 57)}...` : value) : typeof value;
}

/**
 * Check a parsed JSON value against the result schema its `schema` tag names.
 * @param value - the parsed JSON document
 * @param file - where it came from (`where.file` of errors)
 * @returns the document (unknown fields kept)
 * @throws InvalidInputError `INPUT_BAD_RESULT` with `where.file` and `where.keyword` = the first failing field
 *   (`schema` when the tag is missing, unknown or of another version)
 * @example parseResultDocument(JSON.parse(text), 'camera.json').schema // 'subgauge.camera/1'
 */
export function parseResultDocument(value: unknown, file = '(result)'): ResultDocument {
  const known = Object.keys(RESULT_SCHEMAS);
  if (typeof value !== 'object' || value === null || Array.isArray(value)) {
    throw new InvalidInputError('INPUT_BAD_RESULT', `expected a JSON object with a "schema" field; found ${describe(value)}`, {
      file,
      keyword: 'schema',
    });
  }
  const tag = (value as { schema?: unknown }).schema;
  if (typeof tag !== 'string') {
    throw new InvalidInputError('INPUT_BAD_RESULT', `schema: expected one of ${known.join(', ')}; found ${describe(tag)}`, {
      file,
      keyword: 'schema',
    });
  }
  const schema = (RESULT_SCHEMAS as Record<string, z.ZodType<ResultDocument>>)[tag];
  if (!schema) {
    const sameKind = known.find((k) => k.split('/')[0] === tag.split('/')[0]);
    const why = sameKind
      ? `this version of subgauge reads ${sameKind}`
      : `the report shows ${known.join(', ')}`;
    throw new InvalidInputError('INPUT_BAD_RESULT', `schema: ${JSON.stringify(tag)} is not supported (${why})`, {
      file,
      keyword: 'schema',
    });
  }
  const parsed = schema.safeParse(value);
  if (parsed.success) return parsed.data;
  const issue = parsed.error.issues[0]!;
  const field = fieldPath(issue.path);
  const more = parsed.error.issues.length > 1 ? ` (and ${parsed.error.issues.length - 1} more)` : '';
  const message = issue.message.replace(/^Invalid input: /, '');
  throw new InvalidInputError('INPUT_BAD_RESULT', `${tag}: ${field}: ${message}${more}`, { file, keyword: field });
}
