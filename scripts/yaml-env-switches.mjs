// An esbuild plugin for the bundles: the yaml package reads two debug switches of its own
// (LOG_TOKENS in its parser, LOG_STREAM in its composer) from the process environment once per
// token and per document. process.env is a native lookup, slow enough that it took about a quarter
// of a parse (test/bench/lint-throughput.ts). The bundles read each switch once, when the module
// loads, which keeps their meaning; the tests run the package's own files unchanged.
import { readFile } from 'node:fs/promises';

const SWITCHES = [
  { file: /[\\/]yaml[\\/]dist[\\/]parse[\\/]parser\.js$/, name: 'LOG_TOKENS' },
  { file: /[\\/]yaml[\\/]dist[\\/]compose[\\/]composer\.js$/, name: 'LOG_STREAM' },
];

export const yamlEnvSwitches = {
  name: 'yaml-env-switches',
  setup(build) {
    for (const { file, name } of SWITCHES) {
      build.onLoad({ filter: file }, async (args) => {
        const text = await readFile(args.path, 'utf8');
        const lookup = `node_process.env.${name}`;
        // A new yaml release that reads the switch differently must be looked at, not bundled blindly.
        if (!text.includes(lookup)) throw new Error(`${args.path}: no "${lookup}" to read once; see scripts/yaml-env-switches.mjs`);
        const once = `yamlSwitch${name}`;
        return { contents: `var ${once} = require('node:process').env.${name};\n${text.split(lookup).join(once)}`, loader: 'js' };
      });
    }
  },
};
