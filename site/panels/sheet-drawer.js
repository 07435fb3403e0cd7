// On a narrow screen (tablet, phone) the rig sheet opens as a drawer over the page from a tab
// at the foot of the screen, so the user changes the rig without losing their place on the
// map, the motion or the fit; closing it leaves them where they were. Wide screens keep the
// sheet in its column (sticky, styles.css) and never show the tab.

const NARROW = "(max-width: 899.98px)";

/** ``sheet``: the sheet's panel; ``tab``: the opening button; ``close``: the drawer's own. */
export function wireSheetDrawer(sheet, tab, close) {
  const spacer = document.createElement("div");
  spacer.className = "sheet-spacer"; // holds the sheet's place, so the page does not jump
  spacer.hidden = true;
  sheet.after(spacer);
  const heading = sheet.querySelector("h2");
  heading.tabIndex = -1;

  function setOpen(open) {
    if (open) spacer.style.height = `${sheet.offsetHeight}px`;
    spacer.hidden = !open;
    sheet.classList.toggle("is-drawer", open);
    tab.setAttribute("aria-expanded", String(open));
    close.hidden = !open;
    document.body.classList.toggle("drawer-open", open);
    (open ? heading : tab).focus({ preventScroll: true });
  }

  tab.addEventListener("click", () => setOpen(!sheet.classList.contains("is-drawer")));
  close.addEventListener("click", () => setOpen(false));
  sheet.addEventListener("keydown", (event) => {
    if (event.key === "Escape" && sheet.classList.contains("is-drawer")) setOpen(false);
  });
  // Widening the window (a tablet turned) puts the sheet back in its column.
  matchMedia(NARROW).addEventListener("change", (event) => {
    if (!event.matches && sheet.classList.contains("is-drawer")) setOpen(false);
  });
}
