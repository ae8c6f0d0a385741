;;; rill-lsp-mode-e2e.el --- rill-mode with lsp-mode against a rill language server  -*- lexical-binding: t; -*-

;;; Commentary:

;; Like rill-eglot-e2e.el, through lsp-mode and the client rill-mode
;; registers: open a copy of examples/larkspur-east.rill with a unit error,
;; wait for the diagnostics, ask for a hover.  $RILL_LSP_CMD, $RILL_EXPECT_CODE
;; and $RILL_STAND_IN as there.  Needs lsp-mode (Debian's elpa-lsp-mode).
;; Run: emacs --batch -Q -L editors/emacs -l editors/emacs/test/rill-lsp-mode-e2e.el

;;; Code:

(require 'rill-mode)
(require 'lsp-mode)
(require 'json)

(defvar rill-e2e--dir (file-name-directory (or load-file-name buffer-file-name)))

(defun rill-e2e--fail (fmt &rest args)
  (princ (format "emacs lsp-mode check FAILED: %s\n" (apply #'format fmt args)))
  (kill-emacs 1))

(defun rill-e2e--wait (what pred seconds)
  (let ((deadline (+ (float-time) seconds)) value)
    (while (and (not (setq value (funcall pred))) (< (float-time) deadline))
      (accept-process-output nil 0.1))
    (or value (rill-e2e--fail "no %s within %s s" what seconds))))

(let* ((repo (expand-file-name "../../.." rill-e2e--dir))
       (cmd (getenv "RILL_LSP_CMD"))
       (expect (or (getenv "RILL_EXPECT_CODE") "unit.dimension"))
       (dir (file-truename (make-temp-file "rill-lsp-mode-" t)))
       (deck (expand-file-name "larkspur-east.rill" dir))
       (text (with-temp-buffer
               (insert-file-contents (expand-file-name "examples/larkspur-east.rill" repo))
               (buffer-string)))
       (broken (replace-regexp-in-string "kx = layers \\[150 40 300 90\\] md" "kx = 150 psi" text t t))
       (broken-line (with-temp-buffer
                      (insert broken)
                      (goto-char (point-min))
                      (and (search-forward "kx = 150 psi" nil t) (line-number-at-pos)))))
  (setq lsp-session-file (expand-file-name ".lsp-session" dir)
        lsp-auto-guess-root nil
        lsp-enable-file-watchers nil
        lsp-restart 'ignore
        lsp-keep-workspace-alive nil
        lsp-enable-snippet nil
        lsp-headerline-breadcrumb-enable nil
        lsp-modeline-code-actions-enable nil
        lsp-modeline-diagnostics-enable nil
        lsp-lens-enable nil
        lsp-diagnostics-provider :none)
  ;; rill-e2e--fail leaves through kill-emacs, past any unwind-protect.
  (add-hook 'kill-emacs-hook (lambda () (ignore-errors (delete-directory dir t))))
  (unwind-protect
      (progn
        (unless broken-line (rill-e2e--fail "examples/larkspur-east.rill has no kx line to break"))
        (when (and cmd (not (string-empty-p cmd)))
          (setq rill-lsp-command (split-string cmd " " t)))
        (with-temp-file deck (insert broken))
        ;; The folder is the project root: no prompt.
        (lsp-workspace-folders-add dir)
        (find-file deck)
        (unless (eq major-mode 'rill-mode) (rill-e2e--fail "major mode is %s" major-mode))
        (lsp)
        (rill-e2e--wait "lsp-mode workspace"
                        (lambda () (seq-find (lambda (w) (eq (lsp--workspace-status w) 'initialized))
                                             (lsp-workspaces)))
                        30)
        (let* ((diags (rill-e2e--wait "diagnostics"
                                      (lambda () (gethash deck (lsp-diagnostics t)))
                                      30))
               (found nil))
          (dolist (d diags)
            (let ((line (1+ (lsp-translate-line (gethash "line" (gethash "start" (gethash "range" d)) 0))))
                  (code (format "%s" (gethash "code" d)))
                  (message (gethash "message" d)))
              (princ (format "%s:%d: [%s] %s\n" (file-name-nondirectory deck) line code message))
              (when (and (= line broken-line)
                         (or (string= code expect) (string-match-p (regexp-quote expect) message)))
                (setq found t))))
          (unless found (rill-e2e--fail "no %s diagnostic on line %d" expect broken-line)))
        (goto-char (point-min))
        (search-forward "viscosity =")
        (goto-char (+ (match-beginning 0) 2))
        (let* ((hover (lsp-request "textDocument/hover" (lsp--text-document-position-params)))
               (contents (and hover (gethash "contents" hover))))
          (unless contents (rill-e2e--fail "empty hover on viscosity"))
          (princ (format "hover on viscosity: %s\n" (truncate-string-to-width (json-encode contents) 120))))
        (when (equal (getenv "RILL_STAND_IN") "1")
          (let* ((seen (lsp-request "rillTest/seen" nil))
                 (init (json-encode (gethash "initializationOptions" seen)))
                 (changes (gethash "configurationChanges" seen)))
            (princ (format "initializationOptions: %s\n" init))
            (princ (format "didChangeConfiguration: %s\n" (json-encode changes)))
            (unless (equal init "{\"inlayHints\":{\"enabled\":true},\"allowedIncludePaths\":[],\"runOutputDir\":null}")
              (rill-e2e--fail "unexpected initializationOptions %s" init))
            (unless (and (> (length changes) 0)
                         (equal (json-encode (elt changes 0)) (format "{\"rill\":%s}" init)))
              (rill-e2e--fail "settings not pushed under the section rill: %s" (json-encode changes)))))
        (princ "emacs lsp-mode check passed\n"))
    (ignore-errors (lsp-workspace-shutdown (car (lsp-workspaces))))
    (delete-directory dir t)))

(kill-emacs 0)
;;; rill-lsp-mode-e2e.el ends here
