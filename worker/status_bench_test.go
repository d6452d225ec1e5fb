package worker

import (
	"context"
	"net/http"
	"net/http/httptest"
	"testing"
	"time"
)

// BenchmarkJobStatus is GET /v1/jobs/{id} of a job whose record is a file
// in the records directory (the demo Chaboche card's record), through the
// API's handler without a network: the cost serve pays for every poll of
// a finished job.
func BenchmarkJobStatus(b *testing.B) {
	s := newQueueStack(b, nil, false)
	c := loadTestCard(b, "../testdata/cards/ss-chaboche.yaml")
	out, err := Verify(context.Background(), c, testTool, time.Now())
	if err != nil {
		b.Fatal(err)
	}
	rec, err := RecordJSON(out.Record)
	if err != nil {
		b.Fatal(err)
	}
	settings := Settings{ToolVersion: testTool.Version}
	id := JobID(c.Digest, settings)
	if _, err := s.store.Put(id, MetaOf(out.Record), rec, out.Card); err != nil {
		b.Fatal(err)
	}
	api, err := NewAPI(APIConfig{Redis: s.rdb, Queue: s.client, Inspector: s.insp, Store: s.store,
		Tokens: []Token{tokenRead}, Settings: settings})
	if err != nil {
		b.Fatal(err)
	}
	req := httptest.NewRequest(http.MethodGet, "/v1/jobs/"+id, nil)
	req.Header.Set("Authorization", "Bearer "+secretRead)
	for b.Loop() {
		w := httptest.NewRecorder()
		api.ServeHTTP(w, req)
		if w.Code != http.StatusOK {
			b.Fatalf("status %d: %s", w.Code, w.Body)
		}
	}
}
