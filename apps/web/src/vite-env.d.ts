/// <reference types="vite/client" />

interface ImportMetaEnv {
  /** `false` hides the demo-accounts panel on the sign-in page. */
  readonly VITE_DEMO?: string;
}
