"""Cold start of the Ambit desktop app to an interactive roster, measured
over WebDriver on an existing library (no first-start seeding).

For each of N launches: the memory of the app and its WebKit processes
after 5 s idle on the roster, and the wall time from asking tauri-driver for a session
(which starts the app process) until the roster table is shown and the
first row is clickable, and, inside the page, performance.now() at that
moment (milliseconds since the webview began loading the page). The first
figure includes WebKitWebDriver's own start and is an upper bound.

Environment as for test_app.py; AMBIT_START_RUNS (default 5).
"""

import json
import os
import statistics
import subprocess
import sys
import time

from selenium import webdriver
from selenium.webdriver.common.by import By
from selenium.webdriver.common.options import ArgOptions
from selenium.webdriver.support.ui import WebDriverWait

from test_app import PORT, app_memory_kib, env_path, wait_for_port


def main():
    app = env_path("AMBIT_APP")
    runs = int(os.environ.get("AMBIT_START_RUNS", "5"))
    driver_process = subprocess.Popen(
        [str(env_path("TAURI_DRIVER")), "--port", str(PORT)], stdout=sys.stderr, stderr=sys.stderr
    )
    wall, in_page, idle = [], [], []
    try:
        wait_for_port(PORT, 30)
        for _ in range(runs):
            options = ArgOptions()
            options.set_capability("browserName", "wry")
            options.set_capability("tauri:options", {"application": str(app)})
            started = time.monotonic()
            driver = webdriver.Remote(command_executor=f"http://127.0.0.1:{PORT}", options=options)
            try:
                WebDriverWait(driver, 60, poll_frequency=0.02).until(
                    lambda d: d.find_elements(By.CSS_SELECTOR, '[data-testid^="roster-row-"]')
                )
                wall.append(time.monotonic() - started)
                in_page.append(driver.execute_script("return performance.now()") / 1000)
                # Idle on the roster after the cold start: memory of the app
                # and its WebKit processes (see app_memory_kib).
                time.sleep(5)
                idle.append(app_memory_kib(app))
            finally:
                driver.quit()
            time.sleep(1)
    finally:
        driver_process.terminate()
        driver_process.wait(10)
    result = {
        "runs": runs,
        "session_to_roster_seconds_median": statistics.median(wall),
        "session_to_roster_seconds_max": max(wall),
        "page_load_to_roster_seconds_median": statistics.median(in_page),
        "page_load_to_roster_seconds_max": max(in_page),
        "idle_memory_kib_median": {
            key: statistics.median(sample[key] for sample in idle if sample)
            for key in ("app_rss_kib", "tree_rss_kib", "app_pss_kib", "tree_pss_kib")
        }
        if any(idle)
        else None,
    }
    print("e2e-start: " + json.dumps(result))
    target = os.environ.get("AMBIT_START_MEASUREMENTS")
    if target:
        with open(target, "w") as out:
            json.dump(result, out, indent=2)


if __name__ == "__main__":
    main()
