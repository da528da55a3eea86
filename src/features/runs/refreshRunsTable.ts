/**
 * Brings the analysis page's runs table up to date without a reload: fetches the page
 * again and swaps in its runs section (marked `data-runs-history`), so the table is
 * rendered by the same server code as on first load. Does nothing on pages without one.
 */
export async function refreshRunsTable(): Promise<void> {
  const current = document.querySelector('[data-runs-history]');
  if (!current) return;
  try {
    const response = await fetch(window.location.href, { credentials: 'same-origin', headers: { Accept: 'text/html' } });
    if (!response.ok) return;
    const fresh = new DOMParser().parseFromString(await response.text(), 'text/html').querySelector('[data-runs-history]');
    if (fresh) current.innerHTML = fresh.innerHTML;
  } catch {
    // Offline for a moment: the table catches up on the next start or end, or a reload.
  }
}
