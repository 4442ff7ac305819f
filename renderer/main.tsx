// Renderer entry: mount the App on the API from the bridge (Electron preload or browser mode).
import { createRoot } from 'react-dom/client';
import { StrictMode } from 'react';
import { App } from './App';
import { getApi } from './bridge';
import './styles.css';

const el = document.getElementById('root');
if (!el) throw new Error('index.html lacks #root');
createRoot(el).render(
  <StrictMode>
    <App api={getApi()} />
  </StrictMode>,
);
