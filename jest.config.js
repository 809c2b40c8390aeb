/** Jest projects: node-side suites run through @swc/jest (decorator metadata for TypeORM);
 * the app suite runs on jest-expo. scripts/test.ts starts the test PostgreSQL cluster first. */
const swc = [
  '@swc/jest',
  {
    jsc: {
      parser: { syntax: 'typescript', decorators: true },
      transform: { legacyDecorator: true, decoratorMetadata: true },
      target: 'es2022',
    },
    module: { type: 'commonjs' },
  },
];
const node = (name, roots, extra = {}) => ({
  displayName: name,
  testEnvironment: 'node',
  roots,
  transform: { '^.+\\.(t|j)sx?$': swc, '^.+\\.mjs$': swc },
  // aedes 1.x ships ESM only: let swc turn it into CommonJS for jest.
  transformIgnorePatterns: ['/node_modules/(?!(aedes|aedes-[^/]+|hyperid|@fastify|mqemitter)/)'],
  moduleNameMapper: { '^@/(.*)$': '<rootDir>/$1' },
  ...extra,
});
module.exports = {
  // CI machines are small (2 cores) and busy: a first screen render pays for the transform.
  testTimeout: 30000,
  projects: [
    node('unit', ['<rootDir>/tests/unit']),
    node('api', ['<rootDir>/tests/api'], { setupFiles: ['<rootDir>/tests/support/env.ts'] }),
    node('broker', ['<rootDir>/tests/broker'], { setupFiles: ['<rootDir>/tests/support/env.ts'] }),
    {
      displayName: 'app',
      preset: 'jest-expo',
      roots: ['<rootDir>/tests/app'],
      setupFilesAfterEnv: ['<rootDir>/tests/app/support/setup.ts'],
      moduleNameMapper: {
        '\\.woff2$': '<rootDir>/tests/app/support/asset-stub.js',
        // jest runs no dynamic import() without --experimental-vm-modules: screens get the forms
        // directly (the lazy path is exercised by the browser journeys).
        '^@/components/forms/LazyForms$': '<rootDir>/components/forms/form-kit.ts',
        '^@/components/shell/LazyNav$': '<rootDir>/components/shell/nav-kit.ts',
        '^@/(.*)$': '<rootDir>/$1',
      },
    },
  ],
};
