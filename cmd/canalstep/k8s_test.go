package main

import (
	"bytes"
	"errors"
	"fmt"
	"io"
	"os"
	"os/exec"
	"path/filepath"
	"slices"
	"strconv"
	"strings"
	"testing"

	"go.yaml.in/yaml/v3"
)

// The Kubernetes recipe (scripts/k8s/) runs on no cluster here, so
// TestK8sManifests checks what a cluster would need of it: the manifests
// parse as YAML into the fields of the Kubernetes API they use (an unknown
// or misspelt field is an error, as kubectl's strict field validation
// makes it), the batch is an Indexed Job whose pods each run their own
// shard into their own folder, and the merge Job merges those folders. The
// two containers' shell scripts are run for real with /bin/sh and a
// canalstep stand-in that records its arguments. Every check is then shown
// to catch its fault on a mutated copy of the manifests.

// k8sDoc is one Kubernetes object of a manifest: the fields our manifests
// use (a union over ConfigMap, Secret, PersistentVolumeClaim and Job).
type k8sDoc struct {
	APIVersion string            `yaml:"apiVersion"`
	Kind       string            `yaml:"kind"`
	Metadata   k8sMeta           `yaml:"metadata"`
	Type       string            `yaml:"type"`       // Secret
	Data       map[string]string `yaml:"data"`       // ConfigMap
	StringData map[string]string `yaml:"stringData"` // Secret
	Spec       k8sSpec           `yaml:"spec"`
}

type k8sMeta struct {
	Name   string            `yaml:"name"`
	Labels map[string]string `yaml:"labels"`
}

// k8sSpec is a Job's spec or a PersistentVolumeClaim's.
type k8sSpec struct {
	AccessModes []string      `yaml:"accessModes"` // PVC
	Resources   *k8sResources `yaml:"resources"`   // PVC

	CompletionMode          string            `yaml:"completionMode"`
	Completions             *int              `yaml:"completions"`
	Parallelism             *int              `yaml:"parallelism"`
	BackoffLimit            *int              `yaml:"backoffLimit"`
	BackoffLimitPerIndex    *int              `yaml:"backoffLimitPerIndex"`
	PodFailurePolicy        *k8sFailurePolicy `yaml:"podFailurePolicy"`
	TTLSecondsAfterFinished *int              `yaml:"ttlSecondsAfterFinished"`
	Template                *k8sPodTemplate   `yaml:"template"`
}

type k8sResources struct {
	Requests map[string]string `yaml:"requests"`
	Limits   map[string]string `yaml:"limits"`
}

type k8sFailurePolicy struct {
	Rules []struct {
		Action      string `yaml:"action"`
		OnExitCodes *struct {
			ContainerName string `yaml:"containerName"`
			Operator      string `yaml:"operator"`
			Values        []int  `yaml:"values"`
		} `yaml:"onExitCodes"`
	} `yaml:"rules"`
}

type k8sPodTemplate struct {
	Metadata k8sMeta `yaml:"metadata"`
	Spec     struct {
		RestartPolicy string         `yaml:"restartPolicy"`
		Containers    []k8sContainer `yaml:"containers"`
		Volumes       []k8sVolume    `yaml:"volumes"`
	} `yaml:"spec"`
}

type k8sContainer struct {
	Name    string   `yaml:"name"`
	Image   string   `yaml:"image"`
	Command []string `yaml:"command"`
	Args    []string `yaml:"args"`
	Env     []struct {
		Name      string `yaml:"name"`
		Value     string `yaml:"value"`
		ValueFrom *struct {
			FieldRef *struct {
				FieldPath string `yaml:"fieldPath"`
			} `yaml:"fieldRef"`
			SecretKeyRef *struct {
				Name     string `yaml:"name"`
				Key      string `yaml:"key"`
				Optional bool   `yaml:"optional"`
			} `yaml:"secretKeyRef"`
		} `yaml:"valueFrom"`
	} `yaml:"env"`
	Resources    *k8sResources `yaml:"resources"`
	VolumeMounts []struct {
		Name      string `yaml:"name"`
		MountPath string `yaml:"mountPath"`
		ReadOnly  bool   `yaml:"readOnly"`
	} `yaml:"volumeMounts"`
}

type k8sVolume struct {
	Name                  string `yaml:"name"`
	PersistentVolumeClaim *struct {
		ClaimName string `yaml:"claimName"`
	} `yaml:"persistentVolumeClaim"`
	ConfigMap *struct {
		Name string `yaml:"name"`
	} `yaml:"configMap"`
}

// parseK8s decodes every document of a manifest, refusing unknown fields.
func parseK8s(data []byte) ([]k8sDoc, error) {
	dec := yaml.NewDecoder(bytes.NewReader(data))
	dec.KnownFields(true)
	var docs []k8sDoc
	for {
		var d k8sDoc
		err := dec.Decode(&d)
		if errors.Is(err, io.EOF) {
			return docs, nil
		}
		if err != nil {
			return nil, fmt.Errorf("document %d: %w (a field these checks do not know? add it to k8sDoc)", len(docs)+1, err)
		}
		if d.Kind != "" {
			docs = append(docs, d)
		}
	}
}

// k8sFind returns the object of kind with name ("": the only one of kind).
func k8sFind(docs []k8sDoc, kind, name string) (*k8sDoc, error) {
	var found []*k8sDoc
	for i := range docs {
		if docs[i].Kind == kind && (name == "" || docs[i].Metadata.Name == name) {
			found = append(found, &docs[i])
		}
	}
	if len(found) != 1 {
		return nil, fmt.Errorf("%d objects of kind %s named %q, want 1", len(found), kind, name)
	}
	return found[0], nil
}

// envValue returns the value of variable name in c and whether it is set.
func envValue(c *k8sContainer, name string) (string, bool) {
	for _, e := range c.Env {
		if e.Name == name {
			return e.Value, true
		}
	}
	return "", false
}

// jobContainer returns the only container of Job j.
func jobContainer(j *k8sDoc) (*k8sContainer, error) {
	if j.Spec.Template == nil || len(j.Spec.Template.Spec.Containers) != 1 {
		return nil, fmt.Errorf("Job %s: want a pod template with one container", j.Metadata.Name)
	}
	return &j.Spec.Template.Spec.Containers[0], nil
}

// completionIndexPath is where the Job controller puts a pod's completion
// index (Kubernetes documentation, "Indexed Job": the annotation
// batch.kubernetes.io/job-completion-index, also the JOB_COMPLETION_INDEX
// variable it sets).
const completionIndexPath = "metadata.annotations['batch.kubernetes.io/job-completion-index']"

// k8sCheck is one check of the manifests; run returns what is wrong.
type k8sCheck struct {
	name string
	run  func(m *k8sManifests) error
}

// k8sManifests are the two parsed files, and the folder the scripts run in.
type k8sManifests struct {
	batch, merge []k8sDoc
	work         string
}

func (m *k8sManifests) batchJob() (*k8sDoc, *k8sContainer, error) {
	j, err := k8sFind(m.batch, "Job", "")
	if err != nil {
		return nil, nil, fmt.Errorf("batch-indexed-job.yaml: %w", err)
	}
	c, err := jobContainer(j)
	return j, c, err
}

func (m *k8sManifests) mergeJob() (*k8sDoc, *k8sContainer, error) {
	j, err := k8sFind(m.merge, "Job", "")
	if err != nil {
		return nil, nil, fmt.Errorf("merge-job.yaml: %w", err)
	}
	c, err := jobContainer(j)
	return j, c, err
}

// shards returns the batch Job's completions: N.
func (m *k8sManifests) shards() (int, error) {
	j, _, err := m.batchJob()
	if err != nil {
		return 0, err
	}
	if j.Spec.Completions == nil || *j.Spec.Completions < 1 {
		return 0, fmt.Errorf("completions must be set, at least 1 (the number of shards)")
	}
	return *j.Spec.Completions, nil
}

// runScript runs container c's command and args (["/bin/sh", "-c"] and
// one script) with env added, /out replaced by out, and a canalstep on
// PATH that writes its arguments to out/argv and exits with
// $STANDIN_EXIT; it returns the arguments canalstep got, the output and
// the exit status.
func runScript(c *k8sContainer, work, out string, env ...string) (argv, output string, code int, err error) {
	if !slices.Equal(c.Command, []string{"/bin/sh", "-c"}) || len(c.Args) != 1 {
		return "", "", 0, fmt.Errorf("container %s: want command [/bin/sh, -c] and one script in args, have %q and %d args", c.Name, c.Command, len(c.Args))
	}
	script := c.Args[0]
	if out != "" {
		script = strings.ReplaceAll(script, "/out", out)
	}
	bin := filepath.Join(work, "bin")
	if err := os.MkdirAll(bin, 0o755); err != nil {
		return "", "", 0, err
	}
	standin := "#!/bin/sh\nprintf '%s\\n' \"$*\" > \"$STANDIN_ARGV\"\nexit \"${STANDIN_EXIT:-0}\"\n"
	if err := os.WriteFile(filepath.Join(bin, "canalstep"), []byte(standin), 0o755); err != nil {
		return "", "", 0, err
	}
	argvFile := filepath.Join(work, "argv")
	os.Remove(argvFile)
	cmd := exec.Command(c.Command[0], c.Command[1], script)
	cmd.Env = append([]string{"PATH=" + bin + ":/usr/bin:/bin", "STANDIN_ARGV=" + argvFile}, env...)
	var b bytes.Buffer
	cmd.Stdout, cmd.Stderr = &b, &b
	runErr := cmd.Run()
	var ee *exec.ExitError
	switch {
	case errors.As(runErr, &ee):
		code = ee.ExitCode()
	case runErr != nil:
		return "", "", 0, runErr
	}
	a, _ := os.ReadFile(argvFile)
	return strings.TrimSpace(string(a)), b.String(), code, nil
}

// k8sChecks are the checks of TestK8sManifests, each named for the fault
// it catches.
var k8sChecks = []k8sCheck{
	{"batch is an Indexed batch/v1 Job", func(m *k8sManifests) error {
		j, _, err := m.batchJob()
		if err != nil {
			return err
		}
		if j.APIVersion != "batch/v1" || j.Spec.CompletionMode != "Indexed" {
			return fmt.Errorf("apiVersion %q, completionMode %q; want batch/v1 and Indexed", j.APIVersion, j.Spec.CompletionMode)
		}
		return nil
	}},
	{"completions and parallelism", func(m *k8sManifests) error {
		n, err := m.shards()
		if err != nil {
			return err
		}
		j, _, _ := m.batchJob()
		if p := j.Spec.Parallelism; p == nil || *p < 1 || *p > n {
			return fmt.Errorf("parallelism must be set, from 1 to completions (%d)", n)
		}
		return nil
	}},
	{"pods are not restarted in place", func(m *k8sManifests) error {
		// podFailurePolicy needs restartPolicy Never (Kubernetes
		// documentation, "Handling retriable and non-retriable pod
		// failures with Pod failure policy"); and a shard rerun in place
		// would find its own half-written folder.
		for _, f := range []func() (*k8sDoc, *k8sContainer, error){m.batchJob, m.mergeJob} {
			j, _, err := f()
			if err != nil {
				return err
			}
			if rp := j.Spec.Template.Spec.RestartPolicy; rp != "Never" {
				return fmt.Errorf("Job %s: restartPolicy %q, want Never", j.Metadata.Name, rp)
			}
		}
		return nil
	}},
	{"failure policy names the batch container", func(m *k8sManifests) error {
		j, c, err := m.batchJob()
		if err != nil {
			return err
		}
		if j.Spec.PodFailurePolicy == nil {
			return nil
		}
		if j.Spec.BackoffLimitPerIndex == nil {
			return fmt.Errorf("podFailurePolicy with FailIndex needs backoffLimitPerIndex")
		}
		for _, r := range j.Spec.PodFailurePolicy.Rules {
			if r.OnExitCodes != nil && r.OnExitCodes.ContainerName != c.Name {
				return fmt.Errorf("podFailurePolicy names container %q; the container is %q", r.OnExitCodes.ContainerName, c.Name)
			}
			if r.Action == "FailIndex" && (r.OnExitCodes == nil || !slices.Contains(r.OnExitCodes.Values, 1)) {
				return fmt.Errorf("FailIndex must cover exit code 1 (a job of the shard failed: an answer, not an accident)")
			}
		}
		return nil
	}},
	{"JOB_COMPLETION_INDEX from the completion-index annotation", func(m *k8sManifests) error {
		_, c, err := m.batchJob()
		if err != nil {
			return err
		}
		for _, e := range c.Env {
			if e.Name == "JOB_COMPLETION_INDEX" {
				if e.ValueFrom == nil || e.ValueFrom.FieldRef == nil || e.ValueFrom.FieldRef.FieldPath != completionIndexPath {
					return fmt.Errorf("JOB_COMPLETION_INDEX must come from fieldRef %s", completionIndexPath)
				}
				return nil
			}
		}
		return fmt.Errorf("no JOB_COMPLETION_INDEX in the batch container's env")
	}},
	{"SHARDS equals completions in both Jobs", func(m *k8sManifests) error {
		n, err := m.shards()
		if err != nil {
			return err
		}
		for _, f := range []func() (*k8sDoc, *k8sContainer, error){m.batchJob, m.mergeJob} {
			j, c, err := f()
			if err != nil {
				return err
			}
			if v, ok := envValue(c, "SHARDS"); !ok || v != strconv.Itoa(n) {
				return fmt.Errorf("Job %s: SHARDS %q, want completions %d", j.Metadata.Name, v, n)
			}
		}
		return nil
	}},
	{"pod i runs shard i+1/N into /out/shard-(i+1)", func(m *k8sManifests) error {
		n, err := m.shards()
		if err != nil {
			return err
		}
		_, c, err := m.batchJob()
		if err != nil {
			return err
		}
		shards, _ := envValue(c, "SHARDS")
		for i := range n {
			argv, out, code, err := runScript(c, m.work, "", "JOB_COMPLETION_INDEX="+strconv.Itoa(i), "SHARDS="+shards)
			if err != nil {
				return err
			}
			want := fmt.Sprintf("batch --shard %d/%d --out /out/shard-%d /job/job.toml", i+1, n, i+1)
			if code != 0 || argv != want {
				return fmt.Errorf("pod %d: canalstep %q (script exit %d), want %q\n%s", i, argv, code, want, out)
			}
		}
		return nil
	}},
	{"batch exit status passed on", func(m *k8sManifests) error {
		_, c, err := m.batchJob()
		if err != nil {
			return err
		}
		shards, _ := envValue(c, "SHARDS")
		_, out, code, err := runScript(c, m.work, "", "JOB_COMPLETION_INDEX=0", "SHARDS="+shards, "STANDIN_EXIT=1")
		if err != nil {
			return err
		}
		if code != 1 {
			return fmt.Errorf("canalstep batch exited 1, the pod's script %d\n%s", code, out)
		}
		return nil
	}},
	{"mounts match the claim and the ConfigMap", func(m *k8sManifests) error {
		cm, err := k8sFind(m.batch, "ConfigMap", "")
		if err != nil {
			return err
		}
		pvc, err := k8sFind(m.batch, "PersistentVolumeClaim", "")
		if err != nil {
			return err
		}
		if !slices.Contains(pvc.Spec.AccessModes, "ReadWriteMany") {
			return fmt.Errorf("claim %s: access modes %q; the shards' pods and the merge share it: want ReadWriteMany", pvc.Metadata.Name, pvc.Spec.AccessModes)
		}
		if _, ok := cm.Data["job.toml"]; !ok {
			return fmt.Errorf("ConfigMap %s has no job.toml (the batch reads /job/job.toml)", cm.Metadata.Name)
		}
		out, job := "pvc:"+pvc.Metadata.Name, "configMap:"+cm.Metadata.Name
		for _, f := range []struct {
			job  func() (*k8sDoc, *k8sContainer, error)
			want map[string]string // mount path -> volume source
		}{
			{m.batchJob, map[string]string{"/out": out, "/job": job}},
			{m.mergeJob, map[string]string{"/out": out}}, // the merge reads the shard folders only
		} {
			j, c, err := f.job()
			if err != nil {
				return err
			}
			vols := map[string]string{}
			for _, v := range j.Spec.Template.Spec.Volumes {
				switch {
				case v.PersistentVolumeClaim != nil:
					vols[v.Name] = "pvc:" + v.PersistentVolumeClaim.ClaimName
				case v.ConfigMap != nil:
					vols[v.Name] = "configMap:" + v.ConfigMap.Name
				}
			}
			got := map[string]string{}
			for _, vm := range c.VolumeMounts {
				src, ok := vols[vm.Name]
				if !ok {
					return fmt.Errorf("Job %s: mount %s names no volume of the pod", j.Metadata.Name, vm.Name)
				}
				got[vm.MountPath] = src
			}
			for path, src := range f.want {
				if got[path] != src {
					return fmt.Errorf("Job %s: %s mounts %q, want %q", j.Metadata.Name, path, got[path], src)
				}
			}
		}
		return nil
	}},
	{"ConfigMap's job file is a batch job file", func(m *k8sManifests) error {
		cm, err := k8sFind(m.batch, "ConfigMap", "")
		if err != nil {
			return err
		}
		dir := filepath.Join(m.work, "job")
		os.RemoveAll(dir)
		if err := os.MkdirAll(dir, 0o755); err != nil {
			return err
		}
		for name, body := range cm.Data {
			if err := os.WriteFile(filepath.Join(dir, name), []byte(body), 0o644); err != nil {
				return err
			}
		}
		// canalstep batch's own reading of the job file and its design,
		// short of opening the DEM in the object store.
		_, err = configureBatch([]string{"--out", filepath.Join(m.work, "out"), filepath.Join(dir, "job.toml")}, io.Discard)
		return err
	}},
	{"merge Job merges /out/shard-1 … N into /out/merged", func(m *k8sManifests) error {
		n, err := m.shards()
		if err != nil {
			return err
		}
		j, c, err := m.mergeJob()
		if err != nil {
			return err
		}
		if j.APIVersion != "batch/v1" || j.Spec.CompletionMode == "Indexed" || (j.Spec.Completions != nil && *j.Spec.Completions != 1) {
			return fmt.Errorf("the merge must be one batch/v1 Job pod")
		}
		if bl := j.Spec.BackoffLimit; bl == nil || *bl != 0 {
			return fmt.Errorf("merge backoffLimit must be 0: a failed merge is an answer")
		}
		_, bc, err := m.batchJob()
		if err != nil {
			return err
		}
		if c.Image != bc.Image {
			return fmt.Errorf("merge image %q, batch image %q: want the same canalstep", c.Image, bc.Image)
		}
		shards, _ := envValue(c, "SHARDS")
		out := filepath.Join(m.work, "out")
		os.RemoveAll(out)
		var folders []string
		for k := 1; k <= n; k++ {
			folders = append(folders, filepath.Join(out, fmt.Sprintf("shard-%d", k)))
			if err := os.MkdirAll(folders[k-1], 0o755); err != nil {
				return err
			}
		}
		for _, exit := range []int{0, 1} {
			argv, log, code, err := runScript(c, m.work, out, "SHARDS="+shards, "STANDIN_EXIT="+strconv.Itoa(exit))
			if err != nil {
				return err
			}
			want := "merge --out " + filepath.Join(out, "merged") + " " + strings.Join(folders, " ")
			if argv != want || code != exit {
				return fmt.Errorf("merge: canalstep %q exiting %d gave %d; want %q passed on\n%s", argv, exit, code, want, log)
			}
		}
		// A shard that wrote no folder: the others are merged, the Job fails.
		if n > 1 {
			if err := os.Remove(folders[1]); err != nil {
				return err
			}
			argv, log, code, err := runScript(c, m.work, out, "SHARDS="+shards)
			if err != nil {
				return err
			}
			rest := slices.Delete(slices.Clone(folders), 1, 2)
			want := "merge --out " + filepath.Join(out, "merged") + " " + strings.Join(rest, " ")
			if argv != want || code == 0 || !strings.Contains(log, fmt.Sprintf("shard 2/%d wrote no folder", n)) {
				return fmt.Errorf("shard 2 missing: canalstep %q, exit %d; want %q, a non-zero exit and shard 2 named\n%s", argv, code, want, log)
			}
		}
		return nil
	}},
}

// readK8s parses the two manifests from their text.
func readK8s(t *testing.T, batch, merge string) (*k8sManifests, error) {
	t.Helper()
	b, err := parseK8s([]byte(batch))
	if err != nil {
		return nil, fmt.Errorf("batch-indexed-job.yaml: %w", err)
	}
	m, err := parseK8s([]byte(merge))
	if err != nil {
		return nil, fmt.Errorf("merge-job.yaml: %w", err)
	}
	return &k8sManifests{batch: b, merge: m, work: t.TempDir()}, nil
}

// k8sFailures runs every check and returns the names of those that fail,
// with their reasons.
func k8sFailures(m *k8sManifests) map[string]error {
	failed := map[string]error{}
	for _, c := range k8sChecks {
		if err := c.run(m); err != nil {
			failed[c.name] = err
		}
	}
	return failed
}

func TestK8sManifests(t *testing.T) {
	dir := filepath.Join("..", "..", "scripts", "k8s")
	read := func(name string) string {
		b, err := os.ReadFile(filepath.Join(dir, name))
		if err != nil {
			t.Fatal(err)
		}
		return string(b)
	}
	batch, merge := read("batch-indexed-job.yaml"), read("merge-job.yaml")
	m, err := readK8s(t, batch, merge)
	if err != nil {
		t.Fatal(err)
	}
	for name, err := range k8sFailures(m) {
		t.Errorf("scripts/k8s: %s: %v", name, err)
	}

	// Each fault, made in a copy of the text, is caught by its check.
	const parse = "parse"
	for _, tc := range []struct {
		fault    string
		file     string // "batch" or "merge"
		old, new string
		check    string
	}{
		{"not Indexed", "batch", "completionMode: Indexed", "completionMode: NonIndexed", "batch is an Indexed batch/v1 Job"},
		{"misspelt field", "batch", "completionMode: Indexed", "completionsMode: Indexed", parse},
		{"parallelism above completions", "batch", "parallelism: 3", "parallelism: 4", "completions and parallelism"},
		{"batch pods restarted in place", "batch", "restartPolicy: Never", "restartPolicy: OnFailure", "pods are not restarted in place"},
		{"merge pod restarted in place", "merge", "restartPolicy: Never", "restartPolicy: OnFailure", "pods are not restarted in place"},
		{"failure policy on another container", "batch", "containerName: batch", "containerName: main", "failure policy names the batch container"},
		{"index from a label", "batch", "fieldPath: metadata.annotations['batch.kubernetes.io/job-completion-index']", "fieldPath: metadata.labels['batch.kubernetes.io/job-completion-index']", "JOB_COMPLETION_INDEX from the completion-index annotation"},
		{"completions not SHARDS", "batch", "completions: 3", "completions: 4", "SHARDS equals completions in both Jobs"},
		{"merge SHARDS not completions", "merge", `value: "3"`, `value: "2"`, "SHARDS equals completions in both Jobs"},
		{"shard from the 0-based index", "batch", `--shard "$k/$SHARDS"`, `--shard "$JOB_COMPLETION_INDEX/$SHARDS"`, "pod i runs shard i+1/N into /out/shard-(i+1)"},
		{"shards share one folder", "batch", `--out "/out/shard-$k"`, `--out "/out/shards"`, "pod i runs shard i+1/N into /out/shard-(i+1)"},
		{"another job file", "batch", `"/out/shard-$k" /job/job.toml`, `"/out/shard-$k" /job/batch.toml`, "pod i runs shard i+1/N into /out/shard-(i+1)"},
		{"exit status lost", "batch", `exec canalstep batch --shard "$k/$SHARDS" --out "/out/shard-$k" /job/job.toml`,
			`canalstep batch --shard "$k/$SHARDS" --out "/out/shard-$k" /job/job.toml || echo "shard $k: some jobs failed"`, "batch exit status passed on"},
		{"job file mounted elsewhere", "batch", "mountPath: /job,", "mountPath: /config,", "mounts match the claim and the ConfigMap"},
		{"another claim", "batch", "claimName: canalstep-out}\n        - name: job", "claimName: canalstep-scratch}\n        - name: job", "mounts match the claim and the ConfigMap"},
		{"merge on another claim", "merge", "claimName: canalstep-out", "claimName: canalstep-scratch", "mounts match the claim and the ConfigMap"},
		{"another ConfigMap", "batch", "configMap: {name: canalstep-job}", "configMap: {name: canalstep-inputs}", "mounts match the claim and the ConfigMap"},
		{"claim not shared", "batch", `accessModes: ["ReadWriteMany"]`, `accessModes: ["ReadWriteOnce"]`, "mounts match the claim and the ConfigMap"},
		{"job file with an unknown key", "batch", `alternatives = "0.5;1.0;0.5,1.0"`, `alternative = "0.5;1.0;0.5,1.0"`, "ConfigMap's job file is a batch job file"},
		{"design with an unknown key", "batch", "flow = 2.5", "flows = 2.5", "ConfigMap's job file is a batch job file"},
		{"merge of shard 1 only", "merge", "canalstep merge --out /out/merged $dirs", "canalstep merge --out /out/merged /out/shard-1", "merge Job merges /out/shard-1 … N into /out/merged"},
		{"missing shard passes", "merge", `if [ "$rc" -eq 0 ]; then rc=$missing; fi`, "", "merge Job merges /out/shard-1 … N into /out/merged"},
		{"merge retried", "merge", "backoffLimit: 0", "backoffLimit: 3", "merge Job merges /out/shard-1 … N into /out/merged"},
	} {
		t.Run(tc.fault, func(t *testing.T) {
			b, mg := batch, merge
			src := &b
			if tc.file == "merge" {
				src = &mg
			}
			if n := strings.Count(*src, tc.old); n != 1 {
				t.Fatalf("%q is in the %s manifest %d times, want once: update this case to the manifest", tc.old, tc.file, n)
			}
			*src = strings.Replace(*src, tc.old, tc.new, 1)
			m, err := readK8s(t, b, mg)
			if tc.check == parse {
				if err == nil {
					t.Errorf("the fault parsed")
				}
				t.Logf("caught: %v", err)
				return
			}
			if err != nil {
				t.Fatalf("the mutated manifest does not parse: %v", err)
			}
			failed := k8sFailures(m)
			if err, ok := failed[tc.check]; !ok {
				t.Errorf("check %q did not catch it (failed: %v)", tc.check, failed)
			} else {
				t.Logf("caught by %q: %v", tc.check, err)
			}
		})
	}
}
