// The ringside stylesheet, added once by whichever ringside module loads
// first (the shell's precache holds it like every other file under css/).
if (typeof document !== 'undefined' && !document.querySelector('link[data-ringside]')) {
  const l = document.createElement('link');
  l.rel = 'stylesheet';
  l.href = '/css/ringside.css';
  l.dataset.ringside = '';
  document.head.appendChild(l);
}
