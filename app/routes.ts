import { type RouteConfig, index, route } from "@react-router/dev/routes";

// Every route here must have a row in the authorization matrix (app/authz-matrix.int.test.ts).
export default [
  index("routes/home.tsx"),
  route("healthz", "routes/healthz.ts"),
  route("login", "routes/login.tsx"),
  route("logout", "routes/logout.ts"),
  route("forgot-password", "routes/forgot-password.tsx"),
  route("reset-password/:token", "routes/reset-password.tsx"),
  route("invitations/:token", "routes/invitation.tsx"),
  route("account", "routes/account.tsx"),
  route("projects/new", "routes/project-new.tsx"),
  route("projects/:projectId", "routes/project-layout.tsx", [
    index("routes/project-overview.tsx"),
    route("members", "routes/project-members.tsx"),
    route("audit", "routes/project-audit.tsx"),
    route("data", "routes/project-datasets.tsx"),
    route("data/:datasetId", "routes/project-dataset.tsx"),
    route("sites", "routes/project-sites.tsx"),
  ]),
  route("dev/outbox", "routes/dev-outbox.tsx"),
  route("api/me", "routes/api.me.ts"),
  route("api/projects", "routes/api.projects.ts"),
  route("api/projects/:projectId", "routes/api.project.ts"),
  route("api/projects/:projectId/members", "routes/api.project-members.ts"),
  route("api/projects/:projectId/members/:userId", "routes/api.project-member.ts"),
  route("api/projects/:projectId/datasets", "routes/api.project-datasets.ts"),
  route("api/datasets/:datasetId", "routes/api.dataset.ts"),
  route("api/projects/:projectId/sites", "routes/api.project-sites.ts"),
  route("api/projects/:projectId/sites/export", "routes/api.project-sites-export.ts"),
] satisfies RouteConfig;
