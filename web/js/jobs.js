// Follows running jobs on the page: polls the job list and updates each job's progress bar and text.
(function () {
  "use strict";
  var containers = document.querySelectorAll("[data-live-jobs]");
  if (containers.length === 0) { return; }
  var sawActive = false;

  function update(jobs) {
    var active = false;
    jobs.forEach(function (job) {
      document.querySelectorAll('[data-job="' + job.id + '"]').forEach(function (row) {
        row.dataset.state = job.state;
        var bar = row.querySelector("progress");
        if (bar) { bar.value = job.progress; bar.textContent = Math.round(job.progress * 100) + "%"; }
        var text = row.querySelector(".job-text");
        if (text) { text.textContent = job.error || job.progressText; }
        var state = row.querySelector(".job-state");
        if (state) { state.textContent = job.state; }
      });
      if (job.state === "queued" || job.state === "running") { active = true; }
    });
    return active;
  }

  function poll() {
    fetch("/api/jobs?take=200", { credentials: "same-origin", headers: { "Accept": "application/json" } })
      .then(function (response) { return response.ok ? response.json() : []; })
      .then(function (jobs) {
        var active = update(jobs);
        if (active) { sawActive = true; window.setTimeout(poll, 1000); }
        else if (sawActive) { window.location.reload(); }
      })
      .catch(function () { window.setTimeout(poll, 3000); });
  }

  // Reload once when the jobs that were running on arrival have finished (to show their results), never in a loop.
  sawActive = document.querySelector('[data-job][data-state="queued"], [data-job][data-state="running"]') !== null;
  if (!sawActive) { return; }
  poll();
})();
