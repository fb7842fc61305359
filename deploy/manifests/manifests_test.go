// Package manifests checks the Kubernetes manifests of deploy/ against the
// Kubernetes API types, strictly: an unknown or misspelt field, a wrong
// type or a missing required part fails, as the API server would refuse
// it. It is its own module so that the service's dependencies stay lean;
// run it with (cd deploy/manifests && go test ./...), as .ci/run does.
package manifests

import (
	"bytes"
	"os"
	"path/filepath"
	"strings"
	"testing"

	appsv1 "k8s.io/api/apps/v1"
	autoscalingv2 "k8s.io/api/autoscaling/v2"
	corev1 "k8s.io/api/core/v1"
	networkingv1 "k8s.io/api/networking/v1"
	policyv1 "k8s.io/api/policy/v1"
	"sigs.k8s.io/yaml"
)

// typed returns an empty object of the manifest's kind.
func typed(apiVersion, kind string) any {
	switch apiVersion + " " + kind {
	case "apps/v1 Deployment":
		return &appsv1.Deployment{}
	case "v1 Service":
		return &corev1.Service{}
	case "v1 ServiceAccount":
		return &corev1.ServiceAccount{}
	case "v1 Namespace":
		return &corev1.Namespace{}
	case "autoscaling/v2 HorizontalPodAutoscaler":
		return &autoscalingv2.HorizontalPodAutoscaler{}
	case "policy/v1 PodDisruptionBudget":
		return &policyv1.PodDisruptionBudget{}
	case "networking.k8s.io/v1 NetworkPolicy":
		return &networkingv1.NetworkPolicy{}
	}
	return nil
}

// kustomization is the part of a kustomization file these manifests use;
// any other field is refused.
type kustomization struct {
	APIVersion         string           `json:"apiVersion"`
	Kind               string           `json:"kind"`
	Namespace          string           `json:"namespace,omitempty"`
	Resources          []string         `json:"resources"`
	Labels             []map[string]any `json:"labels,omitempty"`
	ConfigMapGenerator []map[string]any `json:"configMapGenerator,omitempty"`
	Images             []map[string]any `json:"images,omitempty"`
	Replicas           []map[string]any `json:"replicas,omitempty"`
	Patches            []map[string]any `json:"patches,omitempty"`
}

func TestManifestsDecodeStrictly(t *testing.T) {
	var files []string
	for _, dir := range []string{"../base", "../overlays/plant"} {
		m, err := filepath.Glob(filepath.Join(dir, "*.yaml"))
		if err != nil {
			t.Fatal(err)
		}
		files = append(files, m...)
	}
	kinds := map[string]bool{}
	for _, f := range files {
		raw, err := os.ReadFile(f)
		if err != nil {
			t.Fatal(err)
		}
		for i, doc := range bytes.Split(raw, []byte("\n---")) {
			if len(bytes.TrimSpace(doc)) == 0 {
				continue
			}
			var head struct {
				APIVersion string `json:"apiVersion"`
				Kind       string `json:"kind"`
			}
			if err := yaml.Unmarshal(doc, &head); err != nil {
				t.Fatalf("%s #%d: %v", f, i, err)
			}
			if head.Kind == "Kustomization" {
				var k kustomization
				if err := yaml.UnmarshalStrict(doc, &k); err != nil {
					t.Errorf("%s: %v", f, err)
				}
				for _, r := range k.Resources {
					if !strings.HasSuffix(r, ".yaml") {
						continue
					}
					if _, err := os.Stat(filepath.Join(filepath.Dir(f), r)); err != nil {
						t.Errorf("%s lists %s, which does not exist", f, r)
					}
				}
				continue
			}
			obj := typed(head.APIVersion, head.Kind)
			if obj == nil {
				t.Errorf("%s #%d: %s %s has no type in this test; add it", f, i, head.APIVersion, head.Kind)
				continue
			}
			if err := yaml.UnmarshalStrict(doc, obj); err != nil {
				t.Errorf("%s #%d (%s): %v", f, i, head.Kind, err)
			}
			kinds[head.Kind] = true
		}
	}
	for _, k := range []string{"Deployment", "Service", "NetworkPolicy", "HorizontalPodAutoscaler", "PodDisruptionBudget"} {
		if !kinds[k] {
			t.Errorf("no %s among the manifests", k)
		}
	}
}

// The NetworkPolicy admits only the API and metrics ports, on the
// Deployment's named ports, and denies all egress.
func TestNetworkPolicy(t *testing.T) {
	raw, err := os.ReadFile("../base/networkpolicy.yaml")
	if err != nil {
		t.Fatal(err)
	}
	var np networkingv1.NetworkPolicy
	if err := yaml.UnmarshalStrict(raw, &np); err != nil {
		t.Fatal(err)
	}
	raw, err = os.ReadFile("../base/deployment.yaml")
	if err != nil {
		t.Fatal(err)
	}
	var d appsv1.Deployment
	if err := yaml.UnmarshalStrict(raw, &d); err != nil {
		t.Fatal(err)
	}
	ports := map[string]bool{}
	for _, p := range d.Spec.Template.Spec.Containers[0].Ports {
		ports[p.Name] = true
	}
	for _, rule := range np.Spec.Ingress {
		for _, p := range rule.Ports {
			if p.Port == nil || !ports[p.Port.StrVal] {
				t.Errorf("the policy admits port %v, which the Deployment does not name", p.Port)
			}
		}
	}
	if len(np.Spec.Egress) != 0 || len(np.Spec.PolicyTypes) != 2 {
		t.Errorf("egress must be denied: %+v", np.Spec)
	}
	for k, v := range np.Spec.PodSelector.MatchLabels {
		if d.Spec.Template.Labels[k] != v {
			t.Errorf("the policy selects %s=%s, which the pods do not carry", k, v)
		}
	}
}
