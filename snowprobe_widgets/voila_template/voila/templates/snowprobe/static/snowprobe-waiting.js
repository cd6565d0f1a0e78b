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

  // A dashboard that has not come within the server's deadline (a session that never
  // started or never ran its notebook while a crowd arrived) is asked for again by
  // loading this page again, a few times at most; the count is shared with the
  // dashboard's own first-draw watch (snowprobe-page.js), which clears it once drawn.
  var MAX_RETRIES = 3;
  var RETRY_KEY = "snowprobe-retries:" + window.location.pathname;
  var deadline = Number(panel.getAttribute("data-sp-deadline")) || 120;

  function late() {
    var n;
    try {
      n = Number(window.sessionStorage.getItem(RETRY_KEY) || "0");
    } catch (err) {
      n = MAX_RETRIES;
    }
    var box = document.getElementById("sp-notice");
    var text = "The dashboard has not come within " + deadline + " s (the server is busy).";
    box.hidden = false;
    if (n >= MAX_RETRIES) {
      document.body.setAttribute("data-sp-draw", "failed");
      box.querySelector(".sp-notice-text").textContent = text + " Loading it again did " +
        "not help: wait a minute, then reload the page.";
      return;
    }
    try {
      window.sessionStorage.setItem(RETRY_KEY, String(n + 1));
    } catch (err) {
      return;
    }
    document.body.setAttribute("data-sp-draw", "retrying");
    box.querySelector(".sp-notice-text").textContent = text + " Loading it again by " +
      "itself (attempt " + (n + 2) + " of " + (MAX_RETRIES + 1) + ").";
    window.setTimeout(function () {
      window.location.reload();
    }, 1500);
  }

  var watch = window.setTimeout(late, 1000 * deadline);
  var headers = {};
  headers[header] = "1";
  window.fetch(window.location.href, { headers: headers, credentials: "same-origin",
    cache: "no-store" }).then(read).then(function (html) {
    window.clearTimeout(watch);
    show(html);
  }, function () {
    window.clearTimeout(watch);
    unreachable();
  });
})();
