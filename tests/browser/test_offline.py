"""Offline: after one visit the service worker serves the whole site, so a
reload with the server gone still computes; the single file computes from disk."""

from __future__ import annotations

import pytest
import shakestill as ss  # the core on CPython: the independent reading

from pagekit import (BOOT_TIMEOUT_MS, assert_same_numbers, assert_single_file_shares_by_fragment,
                     cli_check, open_page, shot, wait_for_result)

pytestmark = pytest.mark.browser


def test_reload_without_server_still_computes(context, own_server, tmp_path):
    page = context.new_page()
    first = open_page(page, own_server.url)
    # The offline copy is complete once the service worker is active and controls the page.
    page.wait_for_function("() => document.documentElement.dataset.offline === 'ready'"
                           " && navigator.serviceWorker.controller !== null", timeout=BOOT_TIMEOUT_MS)
    own_server.stop()
    page.reload()
    again = wait_for_result(page, timeout=BOOT_TIMEOUT_MS)
    assert again == first
    assert_same_numbers(again, cli_check(ss.rig_to_dict(ss.demo_rig()), tmp_path))
    shot(page, "laptop-offline-reload")


def test_single_file_from_disk_computes(page, offline_file, tmp_path):
    result = open_page(page, offline_file.as_uri())
    assert_same_numbers(result, cli_check(ss.rig_to_dict(ss.demo_rig()), tmp_path))
    assert page.inner_text("#chip-offline").startswith("Offline: this file")
    shot(page, "laptop-single-file")


def test_a_link_from_the_single_file_says_where_it_opens(page, offline_file):
    # A file:// address opens only on the computer that has the file: the page gives the
    # fragment (which opens the rig in anyone's copy) and says so, never a link that cannot
    # work. The fragment decodes to the rig on the sheet (the core's share.decode on CPython).
    open_page(page, offline_file.as_uri())
    assert_single_file_shares_by_fragment(page)
