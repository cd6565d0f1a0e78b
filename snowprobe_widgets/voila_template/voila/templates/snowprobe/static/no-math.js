/* snowprobe: the page's LaTeX typesetter, which typesets nothing.
 *
 * The dashboards show no mathematics, yet the page's widget library asks a typesetter to
 * look at every control's label. With the stock typesetter that loads and starts all of
 * MathJax (about 880 kB of script) in every visitor's browser. The launcher points the
 * page at this file instead (page configuration "fullMathjaxUrl"), through JupyterLab's
 * MathJax 2 interface: the same calls, answered at once.
 */
(function () {
  "use strict";
  function nothing() {}
  window.MathJax = {
    Hub: {
      Queue: nothing,
      Config: nothing,
      Configured: nothing,
      Register: { StartupHook: nothing }
    },
    Ajax: {},
    InputJax: { TeX: { resetEquationNumbers: nothing } }
  };
})();
