// Entry of the renderer (index.html): mounts the app on the host of this page.
import { createRoot } from 'react-dom/client';
import { getHost } from '../host/index.ts';
import { App } from './ui/App.tsx';
import './styles.css';

createRoot(document.getElementById('root')!).render(<App host={getHost()} />);
