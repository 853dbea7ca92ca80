"""End-to-end flows of the Ambit desktop app (issue 7), driven over WebDriver.

The real app (debug build) runs under Xvfb; tauri-driver forwards WebDriver
to Debian's WebKitWebDriver, which starts the app. Elements are found only by
the `data-testid`s listed in ui/E2E-IDS.md.

Expected values come from outside the app's own output: the library's SQLite
file read with Python's sqlite3, the sample score's part list read with
Python's xml.etree, and the files on disk.

Environment (set by scripts/e2e.sh):
  AMBIT_APP          the app binary
  TAURI_DRIVER       the tauri-driver binary
  AMBIT_LIBRARY      the library folder; when it holds no library yet, the
                     app's first start prepares the demo library there
  AMBIT_AUDITION_DIR five WAV files, <task>.wav, of one invented singer
  AMBIT_SCREENSHOTS  where to save a screenshot of each screen
  AMBIT_MEASUREMENTS (optional) a JSON file for the timings and memory figures
"""

import json

import os
import socket
import sqlite3
import subprocess
import sys
import time
import unittest
import xml.etree.ElementTree as ElementTree
from pathlib import Path

from selenium import webdriver
from selenium.common.exceptions import StaleElementReferenceException, WebDriverException
from selenium.webdriver.common.by import By
from selenium.webdriver.common.options import ArgOptions
from selenium.webdriver.remote.file_detector import UselessFileDetector
from selenium.webdriver.support.ui import Select, WebDriverWait

ROOT = Path(__file__).resolve().parents[2]
TASKS = ["speech", "glide", "scale", "sustain", "song"]
# An invented singer for the audition flow (original demo data).
NEW_SINGER = "Nell Quayside"
PORT = 4444


def env_path(name):
    value = os.environ.get(name)
    if not value:
        sys.exit(f"e2e: set {name} (scripts/e2e.sh does)")
    return Path(value)


def css(testid):
    return f'[data-testid="{testid}"]'


def wait_for_port(port, seconds):
    deadline = time.monotonic() + seconds
    while time.monotonic() < deadline:
        with socket.socket() as probe:
            if probe.connect_ex(("127.0.0.1", port)) == 0:
                return
        time.sleep(0.1)
    raise RuntimeError(f"tauri-driver did not listen on port {port}")


def app_memory_kib(app):
    """Memory of the app process and of the whole process tree under it (the
    WebKit web and network processes), in KiB, as resident set size (VmRSS,
    which counts a shared library once per process that maps it) and as
    proportional set size (Pss from /proc/PID/smaps_rollup, which shares each
    shared page among the processes mapping it, so a tree's sum counts it
    once). None when the app process is not found."""
    status = {}
    parents = {}
    for entry in Path("/proc").iterdir():
        if not entry.name.isdigit():
            continue
        try:
            fields = dict(
                line.split(":", 1) for line in (entry / "status").read_text().splitlines() if ":" in line
            )
        except OSError:
            continue
        status[entry.name] = fields
        parents[entry.name] = fields.get("PPid", "").strip()
    app_pids = []
    for pid in status:
        try:
            if Path(f"/proc/{pid}/exe").resolve() == Path(app).resolve():
                app_pids.append(pid)
        except OSError:
            continue
    if not app_pids:
        return None
    app_pid = app_pids[0]

    def rss(pid):
        return int(status[pid].get("VmRSS", "0 kB").split()[0])

    def pss(pid):
        try:
            for line in Path(f"/proc/{pid}/smaps_rollup").read_text().splitlines():
                if line.startswith("Pss:"):
                    return int(line.split()[1])
        except OSError:
            pass
        return 0

    tree = {app_pid}
    grew = True
    while grew:
        grew = False
        for pid, parent in parents.items():
            if parent in tree and pid not in tree:
                tree.add(pid)
                grew = True
    return {
        "app_rss_kib": rss(app_pid),
        "tree_rss_kib": sum(rss(pid) for pid in tree),
        "app_pss_kib": pss(app_pid),
        "tree_pss_kib": sum(pss(pid) for pid in tree),
        "processes": len(tree),
    }


class AppFlows(unittest.TestCase):
    """The flows run in order in one app session (methods are numbered)."""

    driver = None
    tauri_driver = None

    @classmethod
    def setUpClass(cls):
        cls.app = env_path("AMBIT_APP")
        cls.library = env_path("AMBIT_LIBRARY")
        cls.auditions = env_path("AMBIT_AUDITION_DIR")
        cls.screenshots = env_path("AMBIT_SCREENSHOTS")
        cls.screenshots.mkdir(parents=True, exist_ok=True)
        # No library in the folder yet: the app's first start prepares one.
        cls.first_start = not (cls.library / "library.sqlite").exists()
        cls.tauri_driver = subprocess.Popen(
            [str(env_path("TAURI_DRIVER")), "--port", str(PORT)],
            stdout=sys.stderr,
            stderr=sys.stderr,
        )
        wait_for_port(PORT, 30)
        options = ArgOptions()
        options.set_capability("browserName", "wry")
        options.set_capability("tauri:options", {"application": str(cls.app)})
        cls.started = time.monotonic()
        cls.driver = webdriver.Remote(
            command_executor=f"http://127.0.0.1:{PORT}", options=options
        )
        # Paths typed into the app's inputs are the app's own paths: never upload them.
        cls.driver.file_detector = UselessFileDetector()
        cls.driver.set_window_size(1280, 860)

    @classmethod
    def tearDownClass(cls):
        if cls.driver is not None:
            try:
                cls.driver.quit()
            except WebDriverException:
                pass
        if cls.tauri_driver is not None:
            cls.tauri_driver.terminate()
            try:
                cls.tauri_driver.wait(10)
            except subprocess.TimeoutExpired:
                cls.tauri_driver.kill()

    # --- helpers ---------------------------------------------------------
    def find(self, testid, seconds=30):
        return WebDriverWait(self.driver, seconds).until(
            lambda driver: driver.find_element(By.CSS_SELECTOR, css(testid))
        )

    def find_all(self, selector):
        return self.driver.find_elements(By.CSS_SELECTOR, selector)

    def visible(self, testid, seconds=30):
        return WebDriverWait(self.driver, seconds).until(
            lambda driver: next(
                (
                    element
                    for element in driver.find_elements(By.CSS_SELECTOR, css(testid))
                    if element.is_displayed()
                ),
                False,
            )
        )

    def go(self, screen):
        self.find(f"nav-{screen}").click()
        return self.visible(f"screen-{screen}")

    def type_into(self, testid, text):
        # A screen may re-render while its data loads and replace the input:
        # find it again and retype until it holds the text.
        for _ in range(5):
            try:
                field = self.find(testid)
                field.clear()
                field.send_keys(text)
                if field.get_attribute("value") == text:
                    return field
            except StaleElementReferenceException:
                pass
            time.sleep(0.5)
        self.fail(f"could not type into {testid}")

    def shot(self, name):
        time.sleep(0.3)  # let charts finish drawing
        self.driver.save_screenshot(str(self.screenshots / f"{name}.png"))

    def switch_ms(self, screen):
        """Milliseconds from the click on a nav button until the screen's root
        is laid out, timed inside the page (performance.now)."""
        script = """
            const done = arguments[arguments.length - 1];
            const start = performance.now();
            document.querySelector('[data-testid="%s"]').click();
            const poll = () => {
              const element = document.querySelector('[data-testid="%s"]');
              // offsetParent forces layout; timers (not animation frames,
              // which an unfocused window under Xvfb may not get) poll.
              if (element && element.offsetParent !== null) done(performance.now() - start);
              else setTimeout(poll, 1);
            };
            poll();
        """ % (f"nav-{screen}", f"screen-{screen}")
        return self.driver.execute_async_script(script)

    def app_memory_kib(self):
        return app_memory_kib(self.app)

    def query(self, sql, *parameters):
        # Read-only, while the app holds the library open (WAL mode allows it).
        connection = sqlite3.connect(f"file:{self.library / 'library.sqlite'}?mode=ro", uri=True)
        try:
            return connection.execute(sql, parameters).fetchall()
        finally:
            connection.close()

    # --- flows ------------------------------------------------------------
    def test_1_starts_on_the_demo_library_and_shows_the_roster(self):
        if self.first_start:
            # The window answers at once and shows the demo library's
            # preparation with its progress while it is made in the background.
            self.visible("library-preparing", 60)
            print(f"e2e: first-start progress shown {time.monotonic() - self.started:.2f} s after session start")
            step = self.find("library-preparing-step").text
            self.assertRegex(step, r"^\d+ of \d+ steps")
            self.shot("first-start")
            WebDriverWait(self.driver, 900).until(
                lambda _: (self.library / "library.sqlite").exists() and not self.find_all(css("library-preparing"))
            )
            # Demo content from the start: the demo library notice is shown.
            self.assertTrue(self.find_all('[aria-label="Demo library"]'))
        table = self.visible("roster-table", 60)
        print(f"e2e: roster visible {time.monotonic() - self.started:.2f} s after session start")
        # The roster shows every active singer the library holds.
        (expected,) = self.query("SELECT count(*) FROM singers WHERE archived = 0")[0]
        self.assertGreater(expected, 0, "the first start seeds the demo choir")
        AppFlows.measured = {
            "roster_visible_seconds": time.monotonic() - self.started,
            "first_start": self.first_start,
        }
        rows = table.find_elements(By.CSS_SELECTOR, '[data-testid^="roster-row-"]')
        self.assertEqual(len(rows), expected)
        names = [name for (name,) in self.query("SELECT name FROM singers WHERE archived = 0")]
        for name in names:
            self.assertTrue(self.find_all(css(f"roster-row-{name}")), name)
        self.shot("singers")

    def test_2_imports_a_sample_score_and_shows_its_parts(self):
        self.go("pieces")
        score = ROOT / "sample-scores" / "lanterns-on-the-quay.mxl"
        self.type_into("piece-import-input", str(score))
        self.find("piece-import-submit").click()
        table = self.visible("parts-table", 60)
        # The part names as the MusicXML's own part list gives them
        # (MusicXML 4.0: part-list/score-part/part-name), read with xml.etree.
        source = ElementTree.parse(ROOT / "sample-scores" / "lanterns-on-the-quay.musicxml")
        part_names = [
            element.text.strip()
            for element in source.getroot().iter("part-name")
            if element.text and element.text.strip()
        ]
        self.assertTrue(part_names)
        WebDriverWait(self.driver, 30).until(
            lambda _: all(name in table.text for name in part_names)
        )
        self.shot("pieces")

        # A hot spot opens its bars engraved from the MusicXML in the
        # notation frame (allowed by the app's CSP: frames from itself only).
        spots = self.find_all('[data-testid^="hot-spot-"]')
        self.assertTrue(spots, "the sample score has hot spots")
        spots[0].click()
        figure = self.find("notation-excerpt", 60)
        WebDriverWait(self.driver, 120).until(
            lambda _: self.find("notation-excerpt").get_attribute("data-state") != "engraving"
        )
        self.assertEqual(self.find("notation-excerpt").get_attribute("data-state"), "engraved", figure.text)
        self.driver.switch_to.frame(self.find("notation-frame"))
        try:
            engraved = self.driver.find_elements(By.CSS_SELECTOR, "svg")
            self.assertTrue(engraved, "the frame holds the engraved notes")
            self.assertGreater(engraved[0].size["height"], 20)
        finally:
            self.driver.switch_to.default_content()
        self.driver.execute_script('arguments[0].scrollIntoView({block: "center"})', figure)
        self.shot("pieces-notation")

    def test_3_imports_audition_files_for_a_new_singer_and_shows_a_result_card(self):
        self.go("audition")
        self.type_into("audition-singer-name", NEW_SINGER)
        for task in TASKS:
            self.type_into(f"audition-file-{task}", str(self.auditions / f"{task}.wav"))
        self.find("audition-analyse").click()
        card = self.visible("result-card", 300)
        voice_type = self.find("result-voice-type").text.strip()
        # The invented singer's voice was synthesised as a tenor's.
        self.assertIn("tenor", voice_type.lower())
        # Every screen that classifies a voice shows the cautions.
        self.assertTrue(self.find("cautions").text.strip())
        self.assertTrue(card.text.strip())
        self.shot("audition")
        self.find("audition-save").click()
        WebDriverWait(self.driver, 60).until(
            lambda _: self.query(
                "SELECT count(*) FROM auditions a JOIN singers s ON s.id = a.singer_id WHERE s.name = ?",
                NEW_SINGER,
            )[0][0]
            == 1
        )

    def test_4_fit_screen(self):
        self.go("fit")
        self.visible("fit-heatmap", 120)
        self.shot("fit")

    def test_5_runs_a_placement_and_moves_a_singer(self):
        self.go("placement")
        self.find("place-solve").click()
        table = self.visible("placement-table", 300)
        rows = table.find_elements(By.CSS_SELECTOR, '[data-testid^="placement-row-"]')
        (placed,) = self.query(
            "SELECT count(*) FROM singers WHERE archived = 0"
        )[0]
        self.assertEqual(len(rows), placed)
        self.shot("placement")
        name = rows[0].get_attribute("data-testid").removeprefix("placement-row-")
        before = self.find(f"placement-section-{name}").text.strip()
        move = Select(self.find(f"place-move-{name}"))
        target = next(
            option.text.strip()
            for option in move.options
            if option.text.strip() and option.text.strip() != before
        )
        move.select_by_visible_text(target)
        self.visible("place-move-delta", 30)
        WebDriverWait(self.driver, 30).until(
            lambda _: self.find(f"placement-section-{name}").text.strip() == target
        )
        self.shot("placement-moved")

    def test_6_history_screen(self):
        self.go("history")
        self.visible("history-chart", 60)
        self.shot("history")

    def test_7_deletes_a_singer_and_their_recordings_are_gone(self):
        files = [
            self.library / "recordings" / file_name
            for (file_name,) in self.query(
                """SELECT DISTINCT r.file_name FROM recordings r
                   JOIN audition_recordings ar ON ar.sha256 = r.sha256
                   JOIN auditions a ON a.id = ar.audition_id
                   JOIN singers s ON s.id = a.singer_id WHERE s.name = ?""",
                NEW_SINGER,
            )
        ]
        self.assertEqual(len(files), len(TASKS), "the saved audition's recordings")
        for file in files:
            self.assertTrue(file.is_file(), file)
        self.go("singers")
        self.find(f"singer-delete-{NEW_SINGER}").click()
        self.visible("confirm-delete").click()
        WebDriverWait(self.driver, 30).until(
            lambda _: not self.find_all(css(f"roster-row-{NEW_SINGER}"))
        )
        for file in files:
            self.assertFalse(file.exists(), f"{file} is still on disk")
        self.assertEqual(
            self.query("SELECT count(*) FROM singers WHERE name = ?", NEW_SINGER)[0][0], 0
        )

    def test_8_measures_screen_switches_and_idle_memory(self):
        screens = ["singers", "audition", "pieces", "fit", "placement", "history"]
        timings = {screen: [] for screen in screens}
        for _ in range(5):
            for screen in screens:
                timings[screen].append(self.switch_ms(screen))
        self.go("singers")
        time.sleep(5)  # idle
        memory = self.app_memory_kib()
        measured = getattr(AppFlows, "measured", {})
        measured.update(
            {
                "screen_switch_ms": {
                    screen: sorted(values)[len(values) // 2] for screen, values in timings.items()
                },
                "screen_switch_ms_max": max(max(values) for values in timings.values()),
                "idle_memory_after_flows": memory,
            }
        )
        print("e2e-measure: " + json.dumps(measured))
        target = os.environ.get("AMBIT_MEASUREMENTS")
        if target:
            Path(target).write_text(json.dumps(measured, indent=2) + "\n")
        self.assertIsNotNone(memory, "the app process was found")


if __name__ == "__main__":
    unittest.main(verbosity=2)
