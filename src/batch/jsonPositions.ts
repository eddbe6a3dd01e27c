import { InputError } from '../errors.js';

/**
 * Finds where a JSON text first goes wrong, for an error message with a line and column. Node's
 * JSON.parse reports a position for some errors only; this small recursive-descent checker walks
 * the grammar of RFC 8259 and stops at the first character that cannot continue it.
 */
export function firstJsonError(text: string): { offset: number; reason: string } | null {
  let i = 0;
  const ws = () => {
    while (i < text.length && ' \t\n\r'.includes(text[i])) i++;
  };
  const fail = (reason: string): never => {
    throw { offset: i, reason };
  };
  const describe = () => (i >= text.length ? 'the end of the file' : `'${text[i]}'`);
  const value = (): void => {
    ws();
    const ch = text[i];
    if (ch === '{') {
      i++;
      ws();
      if (text[i] === '}') {
        i++;
        return;
      }
      for (;;) {
        ws();
        if (text[i] !== '"') fail(`expected a "key" but found ${describe()}`);
        string();
        ws();
        if (text[i] !== ':') fail(`expected ':' after the key but found ${describe()}`);
        i++;
        value();
        ws();
        if (text[i] === ',') {
          i++;
          ws();
          if (text[i] === '}') fail('a comma before } is not allowed in JSON');
          continue;
        }
        if (text[i] === '}') {
          i++;
          return;
        }
        fail(`expected ',' or '}' but found ${describe()}`);
      }
    } else if (ch === '[') {
      i++;
      ws();
      if (text[i] === ']') {
        i++;
        return;
      }
      for (;;) {
        value();
        ws();
        if (text[i] === ',') {
          i++;
          ws();
          if (text[i] === ']') fail('a comma before ] is not allowed in JSON');
          continue;
        }
        if (text[i] === ']') {
          i++;
          return;
        }
        fail(`expected ',' or ']' but found ${describe()}`);
      }
    } else if (ch === '"') string();
    else if (ch === '-' || (ch >= '0' && ch <= '9')) {
      const m = /^-?(0|[1-9]\d*)(\.\d+)?([eE][+-]?\d+)?/.exec(text.slice(i));
      if (!m) fail(`a malformed number`);
      i += m![0].length;
    } else {
      for (const word of ['true', 'false', 'null']) {
        if (text.startsWith(word, i)) {
          i += word.length;
          return;
        }
      }
      fail(`expected a value but found ${describe()}`);
    }
  };
  const string = () => {
    i++;
    while (i < text.length && text[i] !== '"') {
      if (text[i] === '\n') fail('a string runs past the end of the line (missing ")');
      i += text[i] === '\\' ? 2 : 1;
    }
    if (i >= text.length) fail('a string is never closed (missing ")');
    i++;
  };
  try {
    value();
    ws();
    if (i < text.length) fail(`unexpected ${describe()} after the end of the JSON value`);
    return null;
  } catch (err) {
    return err as { offset: number; reason: string };
  }
}

/** 1-based line and column of a character offset, as an editor shows them. */
export function lineColumnAt(text: string, offset: number): { line: number; column: number } {
  let line = 1;
  let lineStart = 0;
  for (let i = 0; i < offset && i < text.length; i++) {
    if (text.charCodeAt(i) === 10) {
      line++;
      lineStart = i + 1;
    }
  }
  return { line, column: offset - lineStart + 1 };
}

/**
 * Parses JSON text (a leading byte-order mark is ignored), or throws an InputError naming the file and
 * the line and column where the text first stops being JSON.
 */
export function parseJsonText(text: string, file: string): unknown {
  const body = text.charCodeAt(0) === 0xfeff ? text.slice(1) : text;
  try {
    return JSON.parse(body);
  } catch {
    const fault = firstJsonError(body) ?? { offset: 0, reason: 'not valid JSON' };
    throw new InputError(`not valid JSON: ${fault.reason}`, { file, ...lineColumnAt(body, fault.offset) });
  }
}
