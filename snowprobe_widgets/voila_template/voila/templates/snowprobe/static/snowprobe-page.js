/* snowprobe page watch: show a plain notice when the page loses its kernel, and load the
 * page again when it has not drawn within a bounded time.
 *
 * Runs before the dashboard's own scripts open their sockets. It wraps the browser's
 * WebSocket so that every kernel-channel socket is watched:
 * - a kernel status message "restarting" or "dead" (sent by the server when the kernel
 *   process died) stops the page for good: the widgets lived in that process;
 * - a closed socket shows a transient notice until a socket opens again.
 * Messages arrive either as JSON text or in the binary "v1" kernel-websocket framing
 * (count of offsets, offsets, then channel, header, parent header, metadata, content).
 */
(function () {
  "use strict";
  var NativeSocket = window.WebSocket;
  var KERNEL_SOCKET = /\/api\/kernels\/[^/]+\/channels/;
  var stopped = false;
  var openSockets = 0;
  var leaving = false;
  var decoder = typeof TextDecoder === "function" ? new TextDecoder() : null;

  function notice() {
    return document.getElementById("sp-notice");
  }

  function show(text, transient) {
    var box = notice();
    if (!box) {
      return;
    }
    box.querySelector(".sp-notice-text").textContent = text;
    box.classList.toggle("sp-notice-transient", !!transient);
    box.hidden = false;
  }

  function stopPage() {
    if (stopped) {
      return;
    }
    stopped = true;
    document.body.classList.add("sp-stopped");
    document.body.setAttribute("data-sp-kernel", "stopped");
    show(
      "This dashboard stopped: the calculation behind it (its kernel) ended, so the " +
        "controls no longer respond. Reload the page to start a fresh session.",
      false
    );
  }

  function readV1(buffer) {
    var view = new DataView(buffer);
    var count = Number(view.getBigUint64(0, true));
    var offsets = [];
    for (var i = 0; i < count; i++) {
      offsets.push(Number(view.getBigUint64(8 * (i + 1), true)));
    }
    function part(k) {
      return decoder.decode(new Uint8Array(buffer, offsets[k], offsets[k + 1] - offsets[k]));
    }
    return {
      channel: part(0),
      header: JSON.parse(part(1)),
      content: JSON.parse(part(4))
    };
  }

  function inspect(event) {
    var msg = null;
    try {
      if (typeof event.data === "string") {
        msg = JSON.parse(event.data);
      } else if (event.data instanceof ArrayBuffer && decoder) {
        msg = readV1(event.data);
      }
    } catch (err) {
      return;
    }
    if (
      msg &&
      msg.channel === "iopub" &&
      msg.header &&
      msg.header.msg_type === "status" &&
      msg.content &&
      (msg.content.execution_state === "restarting" || msg.content.execution_state === "dead")
    ) {
      stopPage();
    }
  }

  function watch(socket) {
    var opened = false;
    socket.addEventListener("open", function () {
      opened = true;
      openSockets += 1;
      document.body.setAttribute("data-sp-kernel", stopped ? "stopped" : "connected");
      var box = notice();
      if (box && !stopped) {
        box.hidden = true;
      }
    });
    socket.addEventListener("message", inspect);
    socket.addEventListener("close", function () {
      if (opened) {
        openSockets -= 1;
        opened = false;
      }
      if (stopped || openSockets > 0 || leaving) {
        return;
      }
      document.body.setAttribute("data-sp-kernel", "lost");
      show(
        "The connection to the snowprobe server was lost: the controls do not respond " +
          "until it comes back. If this notice stays, the server was stopped or this " +
          "session ended; reload the page.",
        true
      );
    });
  }

  function WatchedSocket(url, protocols) {
    var socket =
      protocols === undefined ? new NativeSocket(url) : new NativeSocket(url, protocols);
    if (KERNEL_SOCKET.test(String(url))) {
      watch(socket);
    }
    return socket;
  }
  WatchedSocket.prototype = NativeSocket.prototype;
  ["CONNECTING", "OPEN", "CLOSING", "CLOSED"].forEach(function (name) {
    Object.defineProperty(WatchedSocket, name, { value: NativeSocket[name] });
  });
  window.WebSocket = WatchedSocket;
  window.addEventListener("beforeunload", function () {
    leaving = true;
  });

  window.spReload = function () {
    window.location.reload();
  };

  // While the page waits for its session, count the seconds once a second (a text
  // change costs nothing; an animated bar kept a crowd of browsers busy repainting).
  var loadingSince = Date.now();
  var loadingClock = window.setInterval(function () {
    var clock = document.getElementById("sp-loading-clock");
    if (!document.getElementById("sp-loading")) {
      window.clearInterval(loadingClock);
    } else if (clock) {
      clock.textContent = "Waiting " + Math.round((Date.now() - loadingSince) / 1000) + " s.";
    }
  }, 1000);

  // Voila calls these while it runs the notebook and when the outputs are complete.
  window.voila_heartbeat = function () {};
  window.voila_process = function (cellIndex, cellCount) {
    var text = document.getElementById("sp-loading-text");
    if (text) {
      text.textContent = "Preparing the dashboard: step " + cellIndex + " of " + cellCount + ".";
    }
  };
  window.voila_finish = function () {
    if (!window.themeLoaded) {
      window.cellLoaded = true;
      return;
    }
    var loading = document.getElementById("sp-loading");
    if (loading) {
      loading.parentNode.removeChild(loading);
    }
    var cells = document.getElementById("rendered_cells");
    if (cells) {
      cells.style.display = "";
    }
    document.body.setAttribute("data-sp-ready", "true");
    watchFirstDraw();
  };

  // First-draw watch. A page whose outputs never arrive (the server gave up waiting for
  // the kernel's output while many sessions started at once) or whose widgets never draw
  // would stay blank for ever; instead it says so and loads again by itself (the
  // launcher frees the old session of this browser), a few times at most.
  var DRAW_DEADLINE_MS = 120000; // the server's drawDeadlineS replaces it (watchFirstDraw)
  var EMPTY_PAGE_MS = 3000;
  var MAX_RETRIES = 3;
  var RETRY_KEY = "snowprobe-retries:" + window.location.pathname;

  function retries() {
    try {
      return Number(window.sessionStorage.getItem(RETRY_KEY) || "0");
    } catch (err) {
      return MAX_RETRIES;
    }
  }

  function drawn() {
    var cells = document.getElementById("rendered_cells");
    if (!cells) {
      return false;
    }
    var views = cells.querySelectorAll(".jupyter-widgets");
    for (var i = 0; i < views.length; i++) {
      var text = views[i].textContent || "";
      if (text.indexOf("Loading widget") !== 0 && text.indexOf("Error displaying") !== 0) {
        return true;
      }
    }
    return false;
  }

  function expectsWidgets() {
    // every dashboard displays an app: its output arrives in the page as a script that the
    // page then renders; a page with neither never will draw
    return document.querySelectorAll(
      '#rendered_cells script[type="application/vnd.voila.cell-output+json"], ' +
      "#rendered_cells .jp-OutputArea-output").length > 0;
  }

  function retry(reason) {
    var n = retries();
    if (n >= MAX_RETRIES) {
      document.body.setAttribute("data-sp-draw", "failed");
      show(reason + " Loading it again did not help: the server is very busy. Wait a " +
        "minute, then reload the page.", false);
      return;
    }
    try {
      window.sessionStorage.setItem(RETRY_KEY, String(n + 1));
    } catch (err) {
      return;
    }
    document.body.setAttribute("data-sp-draw", "retrying");
    show(reason + " Loading it again by itself (attempt " + (n + 2) + " of " +
      (MAX_RETRIES + 1) + ").", true);
    window.setTimeout(function () {
      window.location.reload();
    }, 1500);
  }

  function watchFirstDraw() {
    var started = Date.now();
    try {
      var config = JSON.parse(document.getElementById("jupyter-config-data").textContent);
      var deadline = Number((config.snowprobe || {}).drawDeadlineS);
      if (deadline > 0) {
        DRAW_DEADLINE_MS = 1000 * deadline;
      }
    } catch (err) {
      // no configuration: keep the built-in deadline
    }
    var timer = window.setInterval(function () {
      if (stopped) {
        window.clearInterval(timer);
        return;
      }
      if (drawn()) {
        window.clearInterval(timer);
        if (document.body.getAttribute("data-sp-draw") === "waiting" && !stopped) {
          notice().hidden = true;
        }
        document.body.setAttribute("data-sp-draw", "drawn");
        try {
          window.sessionStorage.removeItem(RETRY_KEY);
        } catch (err) {
          return;
        }
        return;
      }
      var waited = Date.now() - started;
      if (!expectsWidgets() && waited > EMPTY_PAGE_MS) {
        window.clearInterval(timer);
        retry("This page arrived without its dashboard.");
      } else if (waited > DRAW_DEADLINE_MS) {
        if (document.body.getAttribute("data-sp-kernel") === "connected") {
          // connected, yet nothing drew: this page will not recover by waiting
          window.clearInterval(timer);
          retry("This page has not drawn its dashboard within " + DRAW_DEADLINE_MS / 1000 +
            " s.");
        } else {
          // still connecting: reloading would only add work to a busy server
          document.body.setAttribute("data-sp-draw", "waiting");
          show("This page has not drawn its dashboard within " + DRAW_DEADLINE_MS / 1000 +
            " s: the server is busy starting sessions. It keeps trying by itself.", true);
        }
      }
    }, 500);
  }
})();
