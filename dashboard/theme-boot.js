// Applies the remembered theme before first paint, so the page never flashes the other theme.
(function () {
  try {
    var t = localStorage.getItem('seqmon.theme');
    if (t !== 'light' && t !== 'dark') t = window.matchMedia('(prefers-color-scheme: light)').matches ? 'light' : 'dark';
    document.documentElement.dataset.theme = t;
    var p = localStorage.getItem('seqmon.phases');
    document.documentElement.dataset.phases = p === 'contrast' ? 'contrast' : 'iec';
  } catch (e) {
    document.documentElement.dataset.theme = 'dark';
  }
})();
