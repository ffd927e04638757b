// Shared by the scripts: the value after `--NAME` on the command line, or `dflt`.
export function option(name, dflt) {
  const k = process.argv.indexOf(`--${name}`);
  return k < 0 ? dflt : process.argv[k + 1];
}
