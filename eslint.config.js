// One lint configuration for the whole tree: JavaScript and TypeScript recommended rules plus the React hooks rules.
import js from "@eslint/js";
import globals from "globals";
import reactHooks from "eslint-plugin-react-hooks";
import tseslint from "typescript-eslint";

export default tseslint.config(
  { ignores: ["build/", ".react-router/", "node_modules/", "tmp/", "data/", "coverage/", "test-results/"] },
  js.configs.recommended,
  ...tseslint.configs.recommended,
  // The hooks rules are for React code (components and use-* hook modules); elsewhere a use* name is just a name.
  { files: ["app/**/*.tsx", "app/**/use-*.ts"], ...reactHooks.configs.flat.recommended },
  {
    // Tests and benchmarks read untyped JSON and call route modules with hand-made arguments.
    files: ["tests/**", "bench/**"],
    rules: { "@typescript-eslint/no-explicit-any": "off" },
  },
  {
    languageOptions: { globals: { ...globals.browser, ...globals.node } },
    linterOptions: { reportUnusedDisableDirectives: "error" },
    rules: {
      "@typescript-eslint/no-unused-vars": ["error", { argsIgnorePattern: "^_", varsIgnorePattern: "^_", caughtErrors: "none" }],
    },
  },
);
