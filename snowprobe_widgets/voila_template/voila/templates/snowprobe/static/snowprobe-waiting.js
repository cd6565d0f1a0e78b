/* snowprobe waiting page: ask for the dashboard in the background and show it when it has
 * come (see waiting.html).
 *
 * The request carries the header named in #sp-loading's data-sp-waiting; the server
 * answers it with the dashboard page, streamed while the session starts and runs the
 * notebook. Meanwhile this page counts the seconds (a text change once a second; nothing
 * animates). The finished answer (the dashboard, or the busy page when every session is
 * taken) replaces this document.
 */
(function () {
  "use strict";
  var panel = document.getElementById("sp-loading");
  var header = panel.getAttribute("data-sp-waiting");
  var since = Date.now();
  var STEP = /voila_process\((\d+), (\d+)\)/g;

  function say(id, text) {
    var element = document.getElementById(id);
    if (element) {
      element.textContent = text;
    }
  }

  var clock = window.setInterval(function () {
    say("sp-loading-clock", "Waiting " + Math.round((Date.now() - since) / 1000) + " s.");
  }, 1000);

  function progress(chunk) {
    var found;
    var last = null;
    while ((found = STEP.exec(chunk)) !== null) {
      last = found;
    }
    if (last) {
      say("sp-loading-text", "Preparing the dashboard: step " + last[1] + " of " + last[2] +
        ".");
    }
  }

  function read(reply) {
    if (!reply.body || typeof TextDecoder !== "function") {
      return reply.text();
    }
    var reader = reply.body.getReader();
    var decoder = new TextDecoder();
    var parts = [];
    function next() {
      return reader.read().then(function (part) {
        if (part.done) {
          parts.push(decoder.decode());
          return parts.join("");
        }
        var chunk = decoder.decode(part.value, { stream: true });
        parts.push(chunk);
        progress(chunk);
        return next();
      });
    }
    return next();
  }

  function show(html) {
    window.clearInterval(clock);
    document.open();
    document.write(html);
    document.close();
  }

  function unreachable() {
    window.clearInterval(clock);
    var box = document.getElementById("sp-notice");
    box.querySelector(".sp-notice-text").textContent =
      "The snowprobe server could not be reached. This page tries again in 20 s.";
    box.hidden = false;
    window.setTimeout(function () {
      window.location.reload();
    }, 20000);
  }

  var headers = {};
  headers[header] = "1";
  window.fetch(window.location.href, { headers: headers, credentials: "same-origin",
    cache: "no-store" }).then(read).then(show, unreachable);
})();
