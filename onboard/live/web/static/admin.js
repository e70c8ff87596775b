/* The administration pages follow the palette chosen on the bridge page of this display (day, dusk,
 * night; stored per display by bridge.js), so opening them at night does not light up the bridge. */
"use strict";
(function () {
  let palette = "day";
  try {
    palette = localStorage.getItem("bridge.palette") || "day";
  } catch (e) {
    /* no storage: day */
  }
  if (!["day", "dusk", "night"].includes(palette)) palette = "day";
  document.documentElement.dataset.palette = palette;
})();
