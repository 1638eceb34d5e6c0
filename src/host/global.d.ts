// The one ambient declaration of the window global the Electron preload exposes (electron/preload).
import type { SpinyardBridge } from './contract.ts';

declare global {
  interface Window {
    /** Present only in the Electron app; read it through getHost() (src/host/index.ts). */
    spinyard?: SpinyardBridge;
  }
}

export {};
