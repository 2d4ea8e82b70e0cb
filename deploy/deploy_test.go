// Package deploy_test checks the deployment files as far as can be done
// without a container engine or a cluster: the Dockerfile's user, the
// .dockerignore against what the build embeds, the compose file and the
// Kubernetes manifests against the Pod Security Standards' restricted
// profile (kubernetes.io/docs/concepts/security/pod-security-standards),
// the startup probe and the memory settings.
package deploy_test

import (
	"bufio"
	"os"
	"path/filepath"
	"regexp"
	"strconv"
	"strings"
	"testing"

	"go.yaml.in/yaml/v3"
)

// root is the repository, one level up from this package.
const root = ".."

// finalStageUser returns the USER of the Dockerfile's last stage.
func finalStageUser(t *testing.T, path string) string {
	t.Helper()
	f, err := os.Open(path)
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	user := ""
	sc := bufio.NewScanner(f)
	for sc.Scan() {
		fields := strings.Fields(sc.Text())
		if len(fields) == 0 {
			continue
		}
		switch strings.ToUpper(fields[0]) {
		case "FROM":
			user = "" // a new stage starts as root
		case "USER":
			if len(fields) != 2 {
				t.Fatalf("USER line %q", sc.Text())
			}
			user = fields[1]
		}
	}
	return user
}

var numericUser = regexp.MustCompile(`^([0-9]+)(:[0-9]+)?$`)

// TestDockerfileRunsAsNumericNonRoot: the image's user is numeric and not
// 0, so that Kubernetes' runAsNonRoot can verify it (with a user name the
// kubelet cannot tell and refuses to start the container).
func TestDockerfileRunsAsNumericNonRoot(t *testing.T) {
	u := finalStageUser(t, filepath.Join(root, "deploy", "Dockerfile"))
	m := numericUser.FindStringSubmatch(u)
	if m == nil {
		t.Fatalf("final stage USER %q is not numeric uid[:gid]", u)
	}
	if m[1] == "0" || m[2] == ":0" {
		t.Errorf("final stage USER %q is root", u)
	}
}

// ignoredBy reports whether .dockerignore pattern p excludes path (slash
// separated, relative to the context): a pattern naming a directory
// excludes what is under it; "**/" matches any number of directories.
func ignoredBy(p, path string) bool {
	p = strings.TrimPrefix(p, "/")
	segs := strings.Split(path, "/")
	for end := 1; end <= len(segs); end++ { // the path and each parent
		prefix := segs[:end]
		if strings.HasPrefix(p, "**/") {
			rest := strings.TrimPrefix(p, "**/")
			for start := range prefix {
				if ok, _ := filepath.Match(rest, strings.Join(prefix[start:], "/")); ok {
					return true
				}
			}
			continue
		}
		if ok, _ := filepath.Match(p, strings.Join(prefix, "/")); ok {
			return true
		}
	}
	return false
}

// embedded lists the files the service's Go code embeds (//go:embed in
// non-test files), relative to the repository.
func embedded(t *testing.T) []string {
	t.Helper()
	var out []string
	err := filepath.WalkDir(root, func(path string, d os.DirEntry, err error) error {
		if err != nil {
			return err
		}
		if d.IsDir() && (d.Name() == ".git" || d.Name() == "testdata") {
			return filepath.SkipDir
		}
		if d.IsDir() || !strings.HasSuffix(path, ".go") || strings.HasSuffix(path, "_test.go") {
			return nil
		}
		b, err := os.ReadFile(path)
		if err != nil {
			return err
		}
		for _, line := range strings.Split(string(b), "\n") {
			pats, ok := strings.CutPrefix(line, "//go:embed ")
			if !ok {
				continue
			}
			for _, pat := range strings.Fields(pats) {
				files, err := filepath.Glob(filepath.Join(filepath.Dir(path), pat))
				if err != nil || len(files) == 0 {
					t.Errorf("%s: //go:embed %s matches nothing", path, pat)
				}
				for _, f := range files {
					rel, _ := filepath.Rel(root, f)
					out = append(out, filepath.ToSlash(rel))
				}
			}
		}
		return nil
	})
	if err != nil {
		t.Fatal(err)
	}
	return out
}

// TestDockerignoreKeepsWhatTheBuildNeeds: .dockerignore exists, keeps
// version control and test data out of the build context, and excludes
// none of the Go sources' module files, the Dockerfile or anything the
// binary embeds (the spec, the migrations).
func TestDockerignoreKeepsWhatTheBuildNeeds(t *testing.T) {
	b, err := os.ReadFile(filepath.Join(root, ".dockerignore"))
	if err != nil {
		t.Fatal(err)
	}
	var pats []string
	for _, l := range strings.Split(string(b), "\n") {
		if l = strings.TrimSpace(l); l != "" && !strings.HasPrefix(l, "#") {
			if strings.HasPrefix(l, "!") {
				t.Fatalf("exception %q: keep the file simple enough for TestDockerignoreKeepsWhatTheBuildNeeds", l)
			}
			pats = append(pats, l)
		}
	}
	excluded := func(path string) bool {
		for _, p := range pats {
			if ignoredBy(p, path) {
				return true
			}
		}
		return false
	}
	needed := append([]string{"go.mod", "go.sum", "deploy/Dockerfile", "cmd/wheelbench/main.go", "api/server.go", "store/store.go"}, embedded(t)...)
	if len(needed) < 8 {
		t.Fatalf("found only %v: the embed search is broken", needed)
	}
	for _, p := range needed {
		if excluded(p) {
			t.Errorf(".dockerignore excludes %s, which the build needs", p)
		}
	}
	for _, p := range []string{".git/HEAD", "service/geometry/testdata/fuzz/FuzzCompute/x", "api/api.test", ".ci/run"} {
		if !excluded(p) {
			t.Errorf(".dockerignore lets %s into the build context", p)
		}
	}
}

// bytesOf reads a memory quantity in Kubernetes ("512Mi"), compose
// ("512m": MiB) or Go's GOMEMLIMIT ("460MiB") notation.
func bytesOf(t *testing.T, q string) float64 {
	t.Helper()
	units := []struct {
		suffix string
		mult   float64
	}{{"KiB", 1 << 10}, {"MiB", 1 << 20}, {"GiB", 1 << 30}, {"Ki", 1 << 10}, {"Mi", 1 << 20}, {"Gi", 1 << 30},
		{"k", 1 << 10}, {"m", 1 << 20}, {"g", 1 << 30}, {"B", 1}}
	for _, u := range units {
		if n, ok := strings.CutSuffix(q, u.suffix); ok {
			v, err := strconv.ParseFloat(n, 64)
			if err != nil {
				t.Fatalf("memory quantity %q: %v", q, err)
			}
			return v * u.mult
		}
	}
	v, err := strconv.ParseFloat(q, 64)
	if err != nil {
		t.Fatalf("memory quantity %q: %v", q, err)
	}
	return v
}

// checkGoMemory: GOGC is 400 (serve's own default, set explicitly) and
// GOMEMLIMIT lies between 75 % and 90 % of the memory limit: near enough
// that the heap GOGC=400 allows is collected before the limit, with room
// left for stacks and the runtime (common practice for Go in containers).
func checkGoMemory(t *testing.T, where string, env map[string]string, limit float64) {
	t.Helper()
	if env["GOGC"] != "400" {
		t.Errorf("%s: GOGC %q, want 400", where, env["GOGC"])
	}
	gml, ok := env["GOMEMLIMIT"]
	if !ok {
		t.Errorf("%s: no GOMEMLIMIT", where)
		return
	}
	if r := bytesOf(t, gml) / limit; r < 0.75 || r > 0.90 {
		t.Errorf("%s: GOMEMLIMIT %s is %.0f %% of the memory limit, want 75–90 %%", where, gml, 100*r)
	}
}

func readYAML(t *testing.T, path string) []map[string]any {
	t.Helper()
	f, err := os.Open(path)
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	var docs []map[string]any
	dec := yaml.NewDecoder(f)
	for {
		var d map[string]any
		if err := dec.Decode(&d); err != nil {
			if err.Error() == "EOF" {
				return docs
			}
			t.Fatalf("%s: %v", path, err)
		}
		if d != nil {
			docs = append(docs, d)
		}
	}
}

// at walks a decoded YAML document by keys; nil when absent.
func at(v any, keys ...string) any {
	for _, k := range keys {
		m, ok := v.(map[string]any)
		if !ok {
			return nil
		}
		v = m[k]
	}
	return v
}

func list(v any) []any { l, _ := v.([]any); return l }

// TestComposeService: the compose file names the image it builds, runs it
// as a numeric non-root user on a read-only root filesystem without
// capabilities, and sets a memory limit with GOGC and GOMEMLIMIT to match.
func TestComposeService(t *testing.T) {
	docs := readYAML(t, filepath.Join(root, "docker-compose.yml"))
	if len(docs) != 1 {
		t.Fatalf("%d documents", len(docs))
	}
	for _, name := range []string{"wheelbench", "demo"} {
		s := at(docs[0], "services", name)
		if s == nil {
			t.Fatalf("no service %s", name)
		}
		img, _ := at(s, "image").(string)
		if img == "" || !strings.Contains(img, ":") || strings.HasSuffix(img, ":latest") {
			t.Errorf("%s: image %q, want a name with a tag other than latest", name, img)
		}
		if at(s, "build") == nil {
			t.Errorf("%s: no build", name)
		}
		u, _ := at(s, "user").(string)
		if m := numericUser.FindStringSubmatch(u); m == nil || m[1] == "0" {
			t.Errorf("%s: user %q, want numeric non-root", name, u)
		}
		if at(s, "read_only") != true {
			t.Errorf("%s: root filesystem not read-only", name)
		}
		if caps := list(at(s, "cap_drop")); len(caps) != 1 || caps[0] != "ALL" {
			t.Errorf("%s: cap_drop %v, want [ALL]", name, caps)
		}
		limit, _ := at(s, "mem_limit").(string)
		env := map[string]string{}
		for k, v := range at(s, "environment").(map[string]any) {
			env[k], _ = v.(string)
		}
		checkGoMemory(t, name, env, bytesOf(t, limit))
	}
}

// podSpecs returns the pod specs in a manifest's documents by kind/name.
func podSpecs(docs []map[string]any) map[string]map[string]any {
	out := map[string]map[string]any{}
	for _, d := range docs {
		kind, _ := d["kind"].(string)
		name, _ := at(d, "metadata", "name").(string)
		var spec any
		switch kind {
		case "Pod":
			spec = d["spec"]
		case "Deployment", "StatefulSet", "DaemonSet", "Job", "ReplicaSet":
			spec = at(d, "spec", "template", "spec")
		case "CronJob":
			spec = at(d, "spec", "jobTemplate", "spec", "template", "spec")
		}
		if m, ok := spec.(map[string]any); ok {
			out[kind+"/"+name] = m
		}
	}
	return out
}

// TestKubernetesRestrictedProfile: every pod the manifests describe meets
// the restricted Pod Security Standard (non-root with a non-zero user,
// no privilege escalation, all capabilities dropped, RuntimeDefault
// seccomp, no host namespaces, ports or paths), and goes further: a
// read-only root filesystem, no service-account token, an image with a
// tag other than latest, a memory limit with GOGC and GOMEMLIMIT to match,
// and for serve a startup probe long enough for its migrations.
func TestKubernetesRestrictedProfile(t *testing.T) {
	files, err := filepath.Glob(filepath.Join(root, "deploy", "kubernetes", "*.yaml"))
	if err != nil || len(files) == 0 {
		t.Fatal("no manifests", err)
	}
	pods := 0
	for _, f := range files {
		for name, spec := range podSpecs(readYAML(t, f)) {
			pods++
			where := filepath.Base(f) + " " + name
			for _, k := range []string{"hostNetwork", "hostPID", "hostIPC"} {
				if spec[k] == true {
					t.Errorf("%s: %s", where, k)
				}
			}
			if spec["automountServiceAccountToken"] != false {
				t.Errorf("%s: automountServiceAccountToken is not false", where)
			}
			for _, v := range list(spec["volumes"]) {
				if at(v, "hostPath") != nil {
					t.Errorf("%s: hostPath volume", where)
				}
			}
			podSC := at(spec, "securityContext")
			for _, c := range list(spec["containers"]) {
				checkContainer(t, where, c, podSC)
			}
		}
	}
	if pods == 0 {
		t.Fatal("no pod templates found in the manifests")
	}
	// The namespace enforces the profile, so a later edit cannot slip by.
	var enforced bool
	for _, f := range files {
		for _, d := range readYAML(t, f) {
			if d["kind"] == "Namespace" && at(d, "metadata", "labels", "pod-security.kubernetes.io/enforce") == "restricted" {
				enforced = true
			}
		}
	}
	if !enforced {
		t.Error("no Namespace enforces pod-security.kubernetes.io/enforce: restricted")
	}
}

// setting is a container's securityContext value, else the pod's.
func setting(c, podSC any, key string) any {
	if v := at(c, "securityContext", key); v != nil {
		return v
	}
	return at(podSC, key)
}

func checkContainer(t *testing.T, pod string, c, podSC any) {
	t.Helper()
	where := pod + " container " + at(c, "name").(string)
	if setting(c, podSC, "runAsNonRoot") != true {
		t.Errorf("%s: runAsNonRoot is not true", where)
	}
	if u, ok := setting(c, podSC, "runAsUser").(int); !ok || u == 0 {
		t.Errorf("%s: runAsUser %v, want a non-zero number", where, setting(c, podSC, "runAsUser"))
	}
	if at(c, "securityContext", "allowPrivilegeEscalation") != false {
		t.Errorf("%s: allowPrivilegeEscalation is not false", where)
	}
	if at(c, "securityContext", "privileged") == true {
		t.Errorf("%s: privileged", where)
	}
	if drop := list(at(c, "securityContext", "capabilities", "drop")); len(drop) != 1 || drop[0] != "ALL" {
		t.Errorf("%s: capabilities.drop %v, want [ALL]", where, drop)
	}
	for _, a := range list(at(c, "securityContext", "capabilities", "add")) {
		if a != "NET_BIND_SERVICE" {
			t.Errorf("%s: adds capability %v", where, a)
		}
	}
	if sp := setting(c, podSC, "seccompProfile"); at(sp, "type") != "RuntimeDefault" && at(sp, "type") != "Localhost" {
		t.Errorf("%s: seccompProfile %v, want RuntimeDefault", where, sp)
	}
	if at(c, "securityContext", "readOnlyRootFilesystem") != true {
		t.Errorf("%s: root filesystem not read-only", where)
	}
	for _, p := range list(at(c, "ports")) {
		if at(p, "hostPort") != nil {
			t.Errorf("%s: hostPort", where)
		}
	}
	img, _ := at(c, "image").(string)
	if img == "" || !strings.Contains(img[strings.LastIndex(img, "/")+1:], ":") || strings.HasSuffix(img, ":latest") {
		t.Errorf("%s: image %q, want a name with a tag other than latest", where, img)
	}
	limit, _ := at(c, "resources", "limits", "memory").(string)
	if limit == "" {
		t.Errorf("%s: no memory limit", where)
		return
	}
	env := map[string]string{}
	for _, e := range list(at(c, "env")) {
		if v, ok := at(e, "value").(string); ok {
			env[at(e, "name").(string)] = v
		}
	}
	checkGoMemory(t, where, env, bytesOf(t, limit))
	args := list(at(c, "args"))
	if len(args) > 0 && args[0] == "serve" {
		sp := at(c, "startupProbe")
		if sp == nil {
			t.Errorf("%s: serve without a startupProbe (it migrates before it listens)", where)
			return
		}
		period, _ := at(sp, "periodSeconds").(int)
		n, _ := at(sp, "failureThreshold").(int)
		if period*n < 120 {
			t.Errorf("%s: startupProbe allows %d s, want at least 120 s for migrations", where, period*n)
		}
		if at(sp, "httpGet", "path") != "/healthz" {
			t.Errorf("%s: startupProbe path %v, want /healthz (alive once listening)", where, at(sp, "httpGet", "path"))
		}
	}
}
