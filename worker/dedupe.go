package worker

import (
	"context"
	"crypto/sha256"
	"encoding/hex"
	"encoding/json"
	"errors"
	"net/http"
	"time"

	"github.com/hibiken/asynq"
)

// A submission of a body sent before is answered from what the first one
// found, without decoding the card again: serve keeps, per body digest
// (the sha256 of the bytes as sent, under the settings and default profile
// that make a job of them), the job id, the card's reference for the
// library rules and the plausibility warnings. The rules are applied again
// (another revision may have been stored since); the job is looked up as
// on the full path; anything but a job queued, running or done goes the
// full path (a failed job, or one whose outputs serve refused, is queued
// again there).

// bodyAnswerTTL is how long a body's answer is kept: a day, so that a CI
// job that resubmits an unchanged library on every commit is answered from
// digests. An entry is a few hundred bytes; once its task has expired
// (TaskRetention) the answer comes from the record (303).
const bodyAnswerTTL = 24 * time.Hour

// bodyAnswer is what serve keeps of a submitted body.
type bodyAnswer struct {
	Job      string   `json:"job"`
	Ref      CardRef  `json:"ref"`
	Warnings []string `json:"warnings,omitempty"`
}

// bodyKey is the Redis key of a body's answer.
func (a *API) bodyKey(body []byte) string {
	sum := sha256.Sum256(body)
	b, _ := json.Marshal(struct {
		Body     string   `json:"body"`
		Settings Settings `json:"settings"`
		Profile  string   `json:"profile"`
	}{hex.EncodeToString(sum[:]), a.c.Settings, a.c.DefaultProfile}) // strings always marshal
	key := sha256.Sum256(b)
	return "matgate:body:" + hex.EncodeToString(key[:])
}

// answerKnownBody answers a submission whose body was sent before and
// reports whether it did. Any doubt (no entry, Redis trouble, a job that
// is gone or failed) leaves the answer to the full path.
func (a *API) answerKnownBody(w http.ResponseWriter, r *http.Request, key string) bool {
	ctx := r.Context()
	b, err := a.c.Redis.Get(ctx, key).Bytes()
	if err != nil {
		return false
	}
	var ans bodyAnswer
	if json.Unmarshal(b, &ans) != nil || !ValidID(ans.Job) {
		return false
	}
	if !a.libraryRules(w, r, ans.Ref) {
		return true // answered 409 (or 503)
	}
	done, err := a.hasRecord(ctx, ans.Job)
	if err != nil {
		return false
	}
	if !done {
		// A job whose outputs serve refused (a failure recorded) goes the
		// full path too: its task may be on its way out.
		if f, err := ReadFailure(ctx, a.c.Redis, ans.Job); err != nil || f != nil {
			return false
		}
		info, err := a.c.Inspector.GetTaskInfo(QueueVerify, ans.Job)
		if err != nil || info.State == asynq.TaskStateArchived {
			return false
		}
	}
	if a.c.Metrics != nil {
		a.c.Metrics.Deduplicated.Inc()
	}
	a.answerSubmission(w, ans, done)
	return true
}

// rememberBody keeps a body's answer; a failure costs only a later parse.
func (a *API) rememberBody(ctx context.Context, key string, ans bodyAnswer) {
	b, err := json.Marshal(ans)
	if err == nil {
		err = a.c.Redis.Set(ctx, key, b, bodyAnswerTTL).Err()
	}
	if err != nil && !errors.Is(err, context.Canceled) {
		a.c.Log.Warn("redis: body digest not kept", "err", err)
	}
}

// answerSubmission answers an accepted submission: 303 to the record of a
// job done, 202 to a job queued or running.
func (a *API) answerSubmission(w http.ResponseWriter, ans bodyAnswer, done bool) {
	j := Job{ID: ans.Job, CardID: ans.Ref.ID, Revision: ans.Ref.Revision, Warnings: ans.Warnings, Links: jobLinks(ans.Job, done)}
	if done {
		j.State = JobDone
		w.Header().Set("Location", "/v1/records/"+ans.Job)
		writeJSON(w, http.StatusSeeOther, j)
		return
	}
	j.State = JobQueued
	w.Header().Set("Location", "/v1/jobs/"+ans.Job)
	w.Header().Set("Retry-After", "1")
	writeJSON(w, http.StatusAccepted, j)
}
