/**
 * Node's argument parser's errors in the project's words ("Expected an option of pair (seamscout
 * help pair lists them) but received --sise"), never the parser's own advice about positionals.
 */
export function plainArgumentError(err: unknown, command: string, args: readonly string[]): string {
  const e = err as Error & { code?: string };
  if (e.code === 'ERR_PARSE_ARGS_UNKNOWN_OPTION') {
    const name = /'([^']+)'/.exec(e.message)?.[1] ?? 'an unknown option';
    return `Expected an option of ${command} (seamscout help ${command} lists them) but received ${name}`;
  }
  if (e.code === 'ERR_PARSE_ARGS_INVALID_OPTION_VALUE') {
    // A value missing, or one given to a switch: name the option and what followed it.
    const name = /'(--[a-z-]+)/.exec(e.message)?.[1] ?? 'an option';
    const at = args.findIndex((a) => a === name || a.startsWith(`${name}=`));
    const given = at >= 0 && args[at].includes('=') ? args[at].slice(name.length + 1) : null;
    if (given !== null) return `Expected no value for ${name} (a switch) but received ${given}`;
    const next = at >= 0 && at + 1 < args.length ? args[at + 1] : 'nothing';
    return `Expected a value for ${name} but received ${next}`;
  }
  if (e.code === 'ERR_PARSE_ARGS_UNEXPECTED_POSITIONAL') return `Expected no more arguments for ${command} but received ${/'([^']+)'/.exec(e.message)?.[1] ?? 'more'}`;
  return `Expected options for ${command} but received arguments it cannot read`;
}

/** Why a file named on the command line could not be used, in plain words (no raw error codes, no decoder text). */
export function plainFileError(err: unknown, path: string, what: string, command: string): string {
  const code = (err as NodeJS.ErrnoException).code;
  const why =
    code === 'ENOENT' ? 'no such file' :
    code === 'EACCES' || code === 'EPERM' ? 'not allowed to read it' :
    code === 'EISDIR' ? 'a folder, not a file' :
    code === 'EIO' ? 'the card or disk could not be read there' :
    code === 'ENOTREGULAR' ? 'not a regular file but a pipe, a device or a socket, so not read' :
    code === 'EFBIG' ? 'too large to read' :
    code === 'ESHORTREAD' ? 'the file ended before its size promised' :
    code ? 'it could not be read' : 'not an image this program can read';
  return `Expected ${what} for ${command} but received ${path} (${why})`;
}
