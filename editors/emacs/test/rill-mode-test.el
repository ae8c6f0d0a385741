;;; rill-mode-test.el --- Font-lock checks of rill-mode  -*- lexical-binding: t; -*-

;;; Commentary:

;; Reads the `# ^^^ scope' assertions of the VS Code grammar fixtures
;; (editors/vscode/test/grammar/*.rill) and checks the faces rill-mode puts
;; at those columns.  Scopes without an Emacs counterpart are not checked.
;; Run: emacs --batch -Q -L editors/emacs -l editors/emacs/test/rill-mode-test.el -f ert-run-tests-batch-and-exit

;;; Code:

(require 'ert)
(require 'cl-lib)
(require 'seq)
(require 'rill-mode)

(defconst rill-test--faces
  '(("comment.line.number-sign.rill" font-lock-comment-face font-lock-comment-delimiter-face)
    ("string.quoted.double.rill" font-lock-string-face)
    ("constant.numeric.rill" rill-number-face)
    ("keyword.other.unit.rill" rill-unit-face)
    ("storage.type.block.rill" rill-block-face)
    ("variable.other.key.rill" rill-key-face)
    ("constant.language.rill" rill-enum-face)
    ("keyword.operator.range.rill" rill-operator-face)
    ("keyword.operator.size.rill" rill-operator-face)
    ("keyword.operator.arithmetic.rill" rill-operator-face)
    ("keyword.other.datum.rill" rill-keyword-face))
  "TextMate scope -> the faces that stand for it in `rill-mode'.")

(defconst rill-test--fixtures
  (expand-file-name "../../vscode/test/grammar"
                    (file-name-directory (or load-file-name buffer-file-name))))

(defun rill-test--mapped (scopes)
  "The last scope of the string SCOPES that has faces, or nil."
  (let (found)
    (dolist (s (split-string scopes "[ \t]+" t))
      (when (assoc s rill-test--faces) (setq found s)))
    found))

(defun rill-test--faces-at (pos)
  (let ((f (get-text-property pos 'face)))
    (if (listp f) f (list f))))

(defun rill-test--check-file (file)
  "Return (CHECKED . FAILURES) for one fixture FILE."
  (let ((checked 0) (failures nil) (source-line nil))
    (with-temp-buffer
      (insert-file-contents file)
      (rill-mode)
      (font-lock-ensure)
      (goto-char (point-min))
      (while (not (eobp))
        (let* ((line (buffer-substring-no-properties (line-beginning-position) (line-end-position)))
               (first nil) (count nil) (rest nil))
          (cond
           ((string-match "\\`\\(#[ \t]*\\)\\(\\^+\\)[ \t]+\\(.*\\)\\'" line)
            (setq first (length (match-string 1 line))
                  count (length (match-string 2 line))
                  rest (match-string 3 line)))
           ((string-match "\\`#[ \t]*<\\(-+\\)[ \t]+\\(.*\\)\\'" line)
            (setq first 0 count (length (match-string 1 line)) rest (match-string 2 line))))
          (cond
           ((and first source-line)
            (let* ((parts (if (string-match "\\(?:\\`\\| \\)- " rest)
                              (list (substring rest 0 (match-beginning 0)) (substring rest (match-end 0)))
                            (list rest "")))
                   (want (rill-test--mapped (car parts)))
                   (reject (rill-test--mapped (cadr parts))))
              (dotimes (i count)
                (let* ((pos (+ source-line first i))
                       (faces (rill-test--faces-at pos))
                       (where (format "%s:%d:%d" (file-name-nondirectory file)
                                      (line-number-at-pos pos) (+ first i 1))))
                  (when want
                    (setq checked (1+ checked))
                    (unless (seq-some (lambda (f) (memq f faces)) (cdr (assoc want rill-test--faces)))
                      (push (format "%s: expected %s, got %S" where want faces) failures)))
                  (when reject
                    (setq checked (1+ checked))
                    (when (seq-some (lambda (f) (memq f faces)) (cdr (assoc reject rill-test--faces)))
                      (push (format "%s: unexpected %s, got %S" where reject faces) failures)))))))
           ((not (string-prefix-p "# SYNTAX TEST" line))
            (setq source-line (line-beginning-position)))))
        (forward-line 1)))
    (cons checked (nreverse failures))))

(ert-deftest rill-mode-font-lock-matches-grammar-fixtures ()
  (let ((files (directory-files rill-test--fixtures t "\\.rill\\'"))
        (checked 0) (failures nil))
    (should files)
    (dolist (f files)
      (let ((r (rill-test--check-file f)))
        (setq checked (+ checked (car r)) failures (append failures (cdr r)))))
    (message "rill-mode: %d positions checked, %d failures" checked (length failures))
    (dolist (f failures) (message "  %s" f))
    (should (> checked 0))
    (should (null failures))))

(ert-deftest rill-mode-is-chosen-for-rill-files ()
  (should (eq (cdr (assoc "\\.rill\\'" auto-mode-alist)) 'rill-mode)))

(ert-deftest rill-mode-comments-with-hash ()
  (with-temp-buffer
    (rill-mode)
    (insert "dx = 50 ft")
    (comment-region (point-min) (point-max))
    (should (equal (buffer-string) "# dx = 50 ft"))))

(ert-deftest rill-mode-indents-blocks ()
  (with-temp-buffer
    (rill-mode)
    (insert "grid {\ndx = 50 ft\ndy = [40\n40] ft\n}\n")
    (indent-region (point-min) (point-max))
    (should (equal (buffer-string) "grid {\n  dx = 50 ft\n  dy = [40\n    40] ft\n}\n"))))

(defvar eglot-server-programs)
(defvar lsp-language-id-configuration)

(ert-deftest rill-mode-registers-with-eglot ()
  ;; Emacs 28 has no eglot: stand in for the feature so the
  ;; `with-eval-after-load' form runs.
  (unless (require 'eglot nil t)
    (setq eglot-server-programs nil)
    (provide 'eglot))
  (let ((entry (assq 'rill-mode eglot-server-programs)))
    (should entry)
    (let ((contact (funcall (cdr entry) nil)))
      (should (equal (seq-take contact 2) '("rill" "lsp")))
      (should (equal (plist-get (nthcdr 2 contact) :initializationOptions) rill-lsp-settings)))))

(ert-deftest rill-mode-registers-with-lsp-mode ()
  (if (require 'lsp-mode nil t)
      (progn
        (should (assq 'rill-mode lsp-language-id-configuration))
        (should (gethash 'rill-lsp (symbol-value 'lsp-clients))))
    ;; No lsp-mode here: record what the registration passes.
    (let (registered)
      (setq lsp-language-id-configuration nil)
      (cl-letf (((symbol-function 'make-lsp-client) (lambda (&rest args) args))
                ((symbol-function 'lsp-stdio-connection) (lambda (f) (list :stdio f)))
                ((symbol-function 'lsp-register-client) (lambda (c) (setq registered c))))
        (provide 'lsp-mode))
      (should (equal (assq 'rill-mode lsp-language-id-configuration) '(rill-mode . "rill")))
      (should (eq (plist-get registered :server-id) 'rill-lsp))
      (should (equal (funcall (cadr (plist-get registered :new-connection))) '("rill" "lsp")))
      (should (equal (funcall (plist-get registered :initialization-options)) rill-lsp-settings)))))

(provide 'rill-mode-test)
;;; rill-mode-test.el ends here
