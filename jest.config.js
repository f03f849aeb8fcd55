/** Jest configuration: TypeScript unit tests under test/, browser tests (test/ui) excluded. */
module.exports = {
  testEnvironment: 'node',
  roots: ['<rootDir>/test'],
  testMatch: ['**/*.spec.ts'],
  testPathIgnorePatterns: ['/node_modules/', '/test/ui/'],
  transform: {
    '^.+\\.[tj]sx?$': [
      'ts-jest',
      { tsconfig: 'tsconfig.test.json', diagnostics: { warnOnly: false } }
    ],
    '^.+\\.m?js$': ['ts-jest', { tsconfig: 'tsconfig.test.json' }]
  },
  transformIgnorePatterns: ['/node_modules/(?!(hyparquet|@jupyterlab)/)']
};
