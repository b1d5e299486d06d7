// The integration suite's entry point, loaded by the editor's extension host (code-server in CI,
// the desktop build through test-electron elsewhere). It resolves when every test passes.
import Mocha from 'mocha';
import { SUITE_START_MARK } from './marks';

// Each file registers its tests when required; listed here because the suite is one bundle.
const testFiles: Array<() => unknown> = [
  () => require('./activation.test'),
  () => require('./diagnostics.test'),
  () => require('./hosts.test'),
  () => require('./compare.test'),
  () => require('./mapping-and-commands.test'),
  () => require('./settings.test'),
  () => require('./image-viewer.test'),
];

export function run(): Promise<void> {
  const mocha = new Mocha({ ui: 'bdd', reporter: 'spec', color: false, timeout: 30000 });
  // Define describe/it on the global object before the test modules run.
  mocha.suite.emit('pre-require', globalThis, 'cachewright-integration', mocha);
  for (const load of testFiles) load();
  console.log(SUITE_START_MARK);
  return new Promise((resolve, reject) => {
    try {
      mocha.run((failures) => {
        if (failures > 0) reject(new Error(`${failures} integration test(s) failed`));
        else resolve();
      });
    } catch (err) {
      reject(err instanceof Error ? err : new Error(String(err)));
    }
  });
}
