/**
 * The report's second inline script: every flagged mark in a plot (an SVG symbol whose aria-label
 * is "flag <id>", chart-track.ts and chart-closeup.ts) gets a tooltip (an SVG title: id, time and
 * deciding test from its table row) and, when clicked, scrolls to that row of its session's
 * table. No data, no network; the page reads fully without it.
 */
export const FLAG_LINKS_SCRIPT = `
(function () {
  var NS = 'http://www.w3.org/2000/svg';
  document.querySelectorAll('section.session').forEach(function (sec) {
    sec.querySelectorAll('svg [aria-label^="flag "]').forEach(function (mark) {
      var id = mark.getAttribute('aria-label').slice(5);
      var row = document.getElementById(sec.id + '-' + id);
      if (!row) return;
      var t = document.createElementNS(NS, 'title');
      t.textContent = id + ': ' + (row.getAttribute('data-summary') || '');
      mark.appendChild(t);
      mark.style.cursor = 'pointer';
      mark.style.pointerEvents = 'all';
      mark.addEventListener('click', function () {
        row.scrollIntoView({ block: 'center' });
        row.classList.add('picked');
        setTimeout(function () { row.classList.remove('picked'); }, 2000);
      });
    });
  });
})();
`;
