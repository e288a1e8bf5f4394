// Package syncremote is the sync client's side of the HTTP protocol: it
// speaks to a central corvane service's sync routes (README, "Syncing a
// laptop") and implements [service.SyncRemote].
package syncremote

import (
	"bytes"
	"context"
	"encoding/json"
	"fmt"
	"io"
	"net/http"
	"net/url"
	"strconv"
	"strings"
	"time"

	"corvane/internal/domain"
	"corvane/internal/service"
)

// Client calls one remote service with one token. It is safe for
// concurrent use.
type Client struct {
	base  string
	token string
	http  *http.Client
}

var _ service.SyncRemote = (*Client)(nil)

// New returns a client of the service at base (e.g. http://host:8080) with
// the bearer token. A nil hc uses a client with a 2 minute timeout.
func New(base, token string, hc *http.Client) (*Client, error) {
	u, err := url.Parse(base)
	if err != nil || (u.Scheme != "http" && u.Scheme != "https") || u.Host == "" {
		return nil, domain.FieldErr("remote", "remote %q: want an http:// or https:// address", base)
	}
	if token == "" {
		return nil, domain.FieldErr("token", "a token of the remote service is required")
	}
	if hc == nil {
		hc = &http.Client{Timeout: 2 * time.Minute}
	}
	return &Client{base: strings.TrimRight(base, "/"), token: token, http: hc}, nil
}

// Error is a refusal of the remote service (its problem document).
type Error struct {
	Status int
	Title  string
	Detail string
}

func (e *Error) Error() string {
	if e.Detail != "" {
		return fmt.Sprintf("remote: %d %s: %s", e.Status, e.Title, e.Detail)
	}
	return fmt.Sprintf("remote: %d %s", e.Status, e.Title)
}

// do sends one request with a JSON body (nil for none) and decodes the
// JSON answer into out.
func (c *Client) do(ctx context.Context, method, path string, body, out any) error {
	var rd io.Reader
	if body != nil {
		b, err := json.Marshal(body)
		if err != nil {
			return err
		}
		rd = bytes.NewReader(b)
	}
	req, err := http.NewRequestWithContext(ctx, method, c.base+path, rd)
	if err != nil {
		return err
	}
	req.Header.Set("Authorization", "Bearer "+c.token)
	req.Header.Set("Accept", "application/json")
	if body != nil {
		req.Header.Set("Content-Type", "application/json")
	}
	resp, err := c.http.Do(req)
	if err != nil {
		return err
	}
	defer resp.Body.Close()
	if resp.StatusCode >= 300 {
		var p struct {
			Title  string `json:"title"`
			Detail string `json:"detail"`
		}
		b, _ := io.ReadAll(io.LimitReader(resp.Body, 1<<16))
		if json.Unmarshal(b, &p) != nil || p.Title == "" {
			p.Title = http.StatusText(resp.StatusCode)
		}
		return &Error{Status: resp.StatusCode, Title: p.Title, Detail: p.Detail}
	}
	return json.NewDecoder(resp.Body).Decode(out)
}

func project(id int64) string { return "/v1/projects/" + strconv.FormatInt(id, 10) }

// Project returns the remote project with id or name ref; "" names the only
// project the token sees.
func (c *Client) Project(ctx context.Context, ref string) (domain.Project, error) {
	var p domain.Project
	if id, err := strconv.ParseInt(ref, 10, 64); err == nil && id > 0 {
		return p, c.do(ctx, http.MethodGet, project(id), nil, &p)
	}
	var all []domain.Project
	after := int64(0)
	for {
		var page struct {
			Items     []domain.Project `json:"items"`
			NextAfter *int64           `json:"next_after"`
		}
		if err := c.do(ctx, http.MethodGet, "/v1/projects?limit=100&after="+strconv.FormatInt(after, 10), nil, &page); err != nil {
			return p, err
		}
		all = append(all, page.Items...)
		if page.NextAfter == nil {
			break
		}
		after = *page.NextAfter
	}
	var names []string
	for _, q := range all {
		if q.Name == ref || (ref == "" && len(all) == 1) {
			return q, nil
		}
		names = append(names, q.Name)
	}
	if ref == "" {
		return p, domain.FieldErr("project", "the remote has %d projects (%s): name one", len(all), strings.Join(names, ", "))
	}
	return p, domain.FieldErr("project", "no project %q on the remote (it has: %s)", ref, strings.Join(names, ", "))
}

// Changes returns one page of the remote's change feed.
func (c *Client) Changes(ctx context.Context, projectID int64, cq service.ChangesQuery) (service.SyncPage, error) {
	var page service.SyncPage
	q := url.Values{}
	q.Set("after", strconv.FormatInt(cq.After, 10))
	q.Set("limit", strconv.Itoa(cq.Limit))
	if len(cq.Holes) > 0 {
		q.Set("holes", strings.Join(cq.Holes, ","))
	}
	if cq.Replica != "" {
		q.Set("replica", cq.Replica)
	}
	return page, c.do(ctx, http.MethodGet, project(projectID)+"/sync/changes?"+q.Encode(), nil, &page)
}

// Push sends one batch of changes.
func (c *Client) Push(ctx context.Context, projectID int64, req service.PushRequest) (service.PushResponse, error) {
	var resp service.PushResponse
	return resp, c.do(ctx, http.MethodPost, project(projectID)+"/sync/push", req, &resp)
}

// Conflict returns one conflict kept by the remote.
func (c *Client) Conflict(ctx context.Context, projectID int64, id string) (service.ConflictView, error) {
	var v service.ConflictView
	return v, c.do(ctx, http.MethodGet, project(projectID)+"/sync/conflicts/"+url.PathEscape(id), nil, &v)
}

// Record returns one record as the remote holds it now.
func (c *Client) Record(ctx context.Context, projectID int64, table, gid string) (service.SyncRecord, error) {
	var r service.SyncRecord
	return r, c.do(ctx, http.MethodGet, project(projectID)+"/sync/records/"+url.PathEscape(table)+"/"+url.PathEscape(gid), nil, &r)
}

// Resolve resolves a conflict on the remote.
func (c *Client) Resolve(ctx context.Context, projectID int64, id, keep string) (service.ConflictView, error) {
	var v service.ConflictView
	return v, c.do(ctx, http.MethodPost, project(projectID)+"/sync/conflicts/"+url.PathEscape(id)+"/resolve", map[string]string{"keep": keep}, &v)
}
