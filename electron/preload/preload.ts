// The preload of every app window: contextBridge only. It exposes the host contract as window.spinyard
// (createBridge in bridge.ts: contract channels only, replies and events checked).

import { contextBridge, ipcRenderer } from 'electron';
import { createBridge } from './bridge.ts';

contextBridge.exposeInMainWorld('spinyard', createBridge(ipcRenderer, process.platform));
